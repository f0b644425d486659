// The desk's engine (app/desk/engine/desk-engine.ts) is a browser-only
// module: loaded on demand when the engineer first presses Listen, never on
// the server. The types are the engine's published interface.
import type { Chain } from "../../../dsp/chain/schema.ts";

export type DeskRegion = { startS: number; endS: number };
export type DeskSource = { url: string };

export interface DeskStageMeter {
  index: number;
  type: string;
  traceNames: string[];
  grDb: number[];
  grPeakDb: number[];
}

export interface DeskMeters {
  playing: boolean;
  positionS: number;
  stages: DeskStageMeter[];
  momentaryLufs: number;
  shortTermLufs: number;
  integratedLufs: number;
  truePeakDbtp: number;
  oversCount: number;
  correlation: number;
  inputMomentaryLufs: number;
  matchOffsetDb: number;
  droppedBlocks: number;
  limiterHistoryDb?: number[];
}

export interface DeskEngineHandle {
  readonly sampleRate: number;
  play(): Promise<void>;
  pause(): void;
  seek(songTimeS: number): void;
  setRegion(region: DeskRegion): Promise<void>;
  setChain(chain: Chain): void;
  setPush(stageIndex: number, on: boolean): void;
  setBypassAll(on: boolean): void;
  setMatch(on: boolean): void;
  setCompareChain(chain: Chain | null): void;
  listenTo(which: "current" | "compare"): void;
  onMeters(listener: (m: DeskMeters) => void): () => void;
  close(): Promise<void>;
}

type EngineModule = {
  DeskEngine: { open(source: DeskSource, region: DeskRegion, chain: Chain, options?: { onProgress?: (fraction: number) => void }): Promise<DeskEngineHandle> };
  PUSH_DESCRIPTIONS?: Record<string, string>;
};

// A glob, not a plain import, while the engine lives on its own branch: an
// empty match means this build has no engine, said plainly to the engineer.
const modules = import.meta.glob<EngineModule>("../../desk/engine/desk-engine.ts");

export async function loadDeskEngine(): Promise<EngineModule> {
  const load = Object.values(modules)[0];
  if (!load) throw new Error("This build has no listening engine.");
  return load();
}
