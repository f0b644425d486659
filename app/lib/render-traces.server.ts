// A render's traces, read from storage and thinned for a chart: a print has
// a point every 10 ms per stage and band, far more than a screen shows. Each
// bucket keeps its largest gain reduction (peaks are what an engineer looks
// for) and its loudest short-term value.
import { storage, StorageNotFoundError } from "./storage/storage.server.ts";
import type { ChartTraces } from "./chart-traces.ts";

export type StoredTraces = {
  gridMs: number;
  stages: { index: number; type: string; names: string[]; gainReductionDb: number[][] }[];
  shortTermLufs: (number | null)[];
};

export function thin(values: (number | null)[], buckets: number, pick: (a: number, b: number) => number): (number | null)[] {
  if (values.length <= buckets) return values.map((v) => (typeof v === "number" && Number.isFinite(v) ? v : null));
  const size = values.length / buckets;
  const out: (number | null)[] = [];
  for (let b = 0; b < buckets; b++) {
    let best: number | null = null;
    for (let i = Math.floor(b * size); i < Math.floor((b + 1) * size); i++) {
      const v = values[i];
      if (typeof v === "number" && Number.isFinite(v)) best = best === null ? v : pick(best, v);
    }
    out.push(best);
  }
  return out;
}

export function thinTraces(traces: StoredTraces, startS = 0, maxPoints = 600): ChartTraces {
  const length = Math.max(traces.shortTermLufs.length, ...traces.stages.flatMap((s) => s.gainReductionDb.map((t) => t.length)), 1);
  const buckets = Math.min(maxPoints, length);
  return {
    stepS: (traces.gridMs / 1000) * (length / buckets),
    startS,
    stages: traces.stages.map((s) => ({
      index: s.index,
      type: s.type,
      names: s.names,
      points: s.gainReductionDb.map((t) => thin(t, buckets, Math.max).map((v) => v ?? 0)),
    })),
    shortTermLufs: thin(traces.shortTermLufs, buckets, Math.max),
  };
}

export async function readChartTraces(key: string | null, startS = 0): Promise<ChartTraces | null> {
  if (!key) return null;
  try {
    const chunks: Buffer[] = [];
    for await (const chunk of await storage().get(key)) chunks.push(Buffer.from(chunk));
    return thinTraces(JSON.parse(Buffer.concat(chunks).toString("utf8")) as StoredTraces, startS);
  } catch (error) {
    if (error instanceof StorageNotFoundError) return null;
    throw error;
  }
}
