// Chain JSON → processors. Bypassed stages are left out entirely (so a
// fully bypassed chain is an exact copy). `extraGainDb` is added to the last
// limiter's input gain (loudness targeting); with no limiter it becomes a
// final trim.

import { Compressor } from "../dynamics/compressor.ts";
import { MultibandCompressor } from "../dynamics/multiband.ts";
import { Limiter } from "../limit/limiter.ts";
import { CeilingPeakDetector } from "../limit/ceiling-detector.ts";
import type { GainReductionSource, Processor } from "../processor.ts";
import { ResonanceTamer } from "../resonance/resonance.ts";
import { Saturator } from "../saturate/saturator.ts";
import { TapeStage } from "../tape/tape.ts";
import { EqStage } from "./eq-stage.ts";
import type { Chain, Stage } from "./schema.ts";
import { TrimStage } from "./trim-stage.ts";

export interface BuiltStage {
  /** Index in chain.stages, −1 for the added loudness trim. */
  index: number;
  type: Stage["type"] | "targetTrim";
  processor: Processor;
  gainReduction: GainReductionSource | null;
}

export interface BuiltChain {
  stages: BuiltStage[];
  latencyFrames: number;
}

export function buildChain(chain: Chain, sampleRate: number, channels: number, maxBlockFrames: number, extraGainDb = 0): BuiltChain {
  const stages: BuiltStage[] = [];
  let lastLimit = -1;
  chain.stages.forEach((s, i) => {
    if (s.type === "limit" && !s.bypass) lastLimit = i;
  });
  chain.stages.forEach((stage, index) => {
    if (stage.bypass) return;
    let processor: Processor;
    let gr: GainReductionSource | null = null;
    switch (stage.type) {
      case "trim":
        processor = new TrimStage(stage.gainDb);
        break;
      case "eq":
        processor = new EqStage(sampleRate, channels, stage.bands);
        break;
      case "saturate":
        processor = new Saturator(sampleRate, channels, stage, maxBlockFrames);
        break;
      case "resonance": {
        const r = new ResonanceTamer(sampleRate, channels, stage, maxBlockFrames);
        processor = r;
        gr = r;
        break;
      }
      case "tape": {
        const t = new TapeStage(sampleRate, channels, stage, maxBlockFrames);
        processor = t;
        gr = t;
        break;
      }
      case "compress": {
        const c = new Compressor(sampleRate, channels, stage, maxBlockFrames);
        processor = c;
        gr = c;
        break;
      }
      case "multiband": {
        for (const hz of stage.crossoversHz) {
          if (hz >= sampleRate / 2) throw new RangeError(`crossover ${hz} Hz is at or above half the sample rate (${sampleRate / 2} Hz)`);
        }
        const m = new MultibandCompressor(sampleRate, channels, stage, maxBlockFrames);
        processor = m;
        gr = m;
        break;
      }
      case "limit": {
        const detector = stage.truePeak ? new CeilingPeakDetector(sampleRate, channels, maxBlockFrames) : null;
        const settings = index === lastLimit ? { ...stage, inputGainDb: stage.inputGainDb + extraGainDb } : stage;
        const l = new Limiter(sampleRate, channels, settings, maxBlockFrames, detector);
        processor = l;
        gr = l;
        break;
      }
    }
    stages.push({ index, type: stage.type, processor, gainReduction: gr });
  });
  if (lastLimit < 0 && extraGainDb !== 0) {
    stages.push({ index: -1, type: "targetTrim", processor: new TrimStage(extraGainDb), gainReduction: null });
  }
  return { stages, latencyFrames: stages.reduce((a, s) => a + s.processor.latencyFrames, 0) };
}
