// Two renders' gain-reduction traces and short-term loudness on one time
// axis, the mix's, as rows a recharts chart takes directly.
//
// A render's trace value j is the largest gain reduction (dB ≥ 0) during grid
// step j of the render's own time; a preview's render time starts at its
// region's start, so its values move by that offset. The shared grid is the
// coarser of the two; where a finer trace is folded onto it, the maximum is
// kept so a short transient is not averaged away. Charts are thinned the same
// way (maximum per bucket) to at most `maxPoints` rows.

/** One stage's traces as the renderer stores them (dsp/render). */
export type StageTrace = { index: number; type: string; names: string[]; gainReductionDb: number[][] };
export type RenderTraces = { gridMs: number; stages: StageTrace[]; shortTermLufs?: (number | null)[] };

export type TraceSource = {
  traces: RenderTraces;
  /** Where the render's t = 0 sits on the mix's time axis, s: a preview's region start, 0 for a print. */
  offsetS: number;
};

export type SeriesInfo = {
  /** Row key, e.g. `A:s3:band2` or `B:loudness`. */
  key: string;
  source: "A" | "B";
  kind: "gainReduction" | "shortTermLufs";
  stageIndex: number | null;
  stageType: string | null;
  traceName: string | null;
};

/** One chart: a stage's trace (or the loudness) of both renders, for drawing over each other. */
export type TracePanel = { id: string; title: string; kind: SeriesInfo["kind"]; a: string | null; b: string | null };

export type TraceRow = { timeS: number } & Record<string, number | null>;

export type AlignedTraces = {
  gridMs: number;
  startS: number;
  endS: number;
  series: SeriesInfo[];
  panels: TracePanel[];
  rows: TraceRow[];
  /** True when limited to a zoom region rather than the whole shared span. */
  zoomed?: boolean;
};

type Line = { info: SeriesInfo; values: readonly (number | null)[]; gridMs: number; offsetS: number };

const finite = (v: number | null | undefined): v is number => typeof v === "number" && Number.isFinite(v);

function linesOf(label: "A" | "B", source: TraceSource): Line[] {
  const { traces, offsetS } = source;
  const lines: Line[] = [];
  for (const stage of traces.stages) {
    stage.gainReductionDb.forEach((values, t) => {
      const traceName = stage.names[t] ?? `trace${t + 1}`;
      lines.push({
        info: { key: `${label}:s${stage.index}:${traceName}`, source: label, kind: "gainReduction", stageIndex: stage.index, stageType: stage.type, traceName },
        values,
        gridMs: traces.gridMs,
        offsetS,
      });
    });
  }
  if (traces.shortTermLufs?.length) {
    lines.push({
      info: { key: `${label}:loudness`, source: label, kind: "shortTermLufs", stageIndex: null, stageType: null, traceName: null },
      values: traces.shortTermLufs,
      gridMs: traces.gridMs,
      offsetS,
    });
  }
  return lines;
}

const spanEndS = (line: Line) => line.offsetS + (line.values.length * line.gridMs) / 1000;

/**
 * Puts two renders' traces on the mix's time axis. `startS`/`endS` limit the
 * span (default: everything either render covers); `shared` limits it to
 * the stretch both cover, which is what the A/B player plays (a preview
 * against its whole mix: the preview's region).
 */
export function alignTraces(a: TraceSource, b: TraceSource, options: { startS?: number; endS?: number; maxPoints?: number; shared?: boolean } = {}): AlignedTraces {
  const linesA = linesOf("A", a);
  const linesB = linesOf("B", b);
  const lines = [...linesA, ...linesB];
  const gridMs = Math.max(a.traces.gridMs, b.traces.gridMs);
  const gridS = gridMs / 1000;
  const coverEndS = (own: Line[], offsetS: number) => Math.max(offsetS, ...own.map(spanEndS));
  const sharedEndS = Math.min(coverEndS(linesA, a.offsetS), coverEndS(linesB, b.offsetS));
  const useShared = options.shared && linesA.length > 0 && linesB.length > 0 && sharedEndS > Math.max(a.offsetS, b.offsetS);
  const startS = options.startS ?? (useShared ? Math.max(a.offsetS, b.offsetS) : Math.min(a.offsetS, b.offsetS));
  const endS = options.endS ?? (useShared ? sharedEndS : Math.max(startS, ...lines.map(spanEndS)));
  const steps = Math.max(0, Math.ceil((endS - startS) / gridS - 1e-9));
  const maxPoints = Math.max(2, options.maxPoints ?? 2000);
  const bucketSteps = Math.max(1, Math.ceil(steps / maxPoints));
  const rowCount = Math.ceil(steps / bucketSteps);
  const rows: TraceRow[] = Array.from({ length: rowCount }, (_, r) => ({ timeS: round(startS + r * bucketSteps * gridS) }) as TraceRow);
  for (const line of lines) {
    const column = new Array<number | null>(rowCount).fill(null);
    const lineGridS = line.gridMs / 1000;
    line.values.forEach((v, j) => {
      if (!finite(v)) return;
      // The shared step that contains this value's start; the tolerance keeps a region start on the grid exact.
      const step = Math.floor((line.offsetS + j * lineGridS - startS) / gridS + 1e-6);
      const r = Math.floor(step / bucketSteps);
      if (step < 0 || r >= rowCount) return;
      const prev = column[r];
      column[r] = prev === null ? v : Math.max(prev, v);
    });
    column.forEach((v, r) => (rows[r][line.info.key] = v));
  }
  return { gridMs: gridMs * bucketSteps, startS, endS, series: lines.map((l) => l.info), panels: panelsOf(lines.map((l) => l.info)), rows };
}

const round = (s: number) => Math.round(s * 1e6) / 1e6;

/** A zoom region as the compare page's URL carries it, "12.5-20" (seconds on the mix axis); null when absent or not one. */
export function parseZoom(text: string | null | undefined): { startS: number; endS: number } | null {
  const m = /^(\d+(?:\.\d+)?)-(\d+(?:\.\d+)?)$/.exec(text ?? "");
  if (!m) return null;
  const startS = Number(m[1]);
  const endS = Number(m[2]);
  return Number.isFinite(startS) && Number.isFinite(endS) && endS - startS >= 0.05 ? { startS, endS } : null;
}

export const formatZoom = (zoom: { startS: number; endS: number }) => `${zoom.startS.toFixed(2)}-${zoom.endS.toFixed(2)}`;

function panelsOf(series: SeriesInfo[]): TracePanel[] {
  const panels = new Map<string, TracePanel>();
  for (const s of series) {
    const id = s.kind === "shortTermLufs" ? "loudness" : `s${s.stageIndex}:${s.traceName}`;
    const title = s.kind === "shortTermLufs" ? "Short-term loudness (LUFS)" : `Stage ${s.stageIndex! + 1} · ${s.stageType}${s.traceName === "gr" ? "" : ` · ${s.traceName}`} (dB)`;
    const panel = panels.get(id) ?? { id, title, kind: s.kind, a: null, b: null };
    if (s.source === "A") panel.a = s.key;
    else panel.b = s.key;
    panels.set(id, panel);
  }
  // Loudness last, stages in chain order.
  return [...panels.values()].sort((x, y) => (x.id === "loudness" ? 1 : y.id === "loudness" ? -1 : 0));
}

/** The time of a series' largest value (e.g. where a transient hits the limiter hardest). */
export function peakTimeS(aligned: AlignedTraces, key: string): number | null {
  let best: { timeS: number; value: number } | null = null;
  for (const row of aligned.rows) {
    const v = row[key];
    if (finite(v) && (!best || v > best.value)) best = { timeS: row.timeS, value: v };
  }
  return best?.timeS ?? null;
}
