import { readFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { COMPRESS_FIELDS, LIMIT_FIELDS } from "./fields.ts";
import { parseChain } from "./schema.ts";

const compress = { type: "compress", thresholdDb: -20, ratio: 2, kneeDb: 6, attackMs: 30, releaseMs: "auto", makeupDb: 1, rmsWindowMs: 20 };

function errorsOf(json: unknown): string[] {
  const r = parseChain(json);
  if (r.ok) return [];
  return r.errors.map((e) => `${e.path}: ${e.message}`);
}

describe("chain schema", () => {
  it("accepts the design's example and the shipped example chain, filling defaults", () => {
    const design = {
      stages: [
        { type: "eq", bands: [{ shape: "peak", freqHz: 3150, gainDb: -0.6, q: 1.8, channel: "stereo" }, { shape: "highShelf", freqHz: 8000, gainDb: 0.5, q: 0.7, channel: "side" }] },
        { ...compress, sidechainHighPassHz: 80 },
        { type: "multiband", crossoversHz: [120, 800, 4000], bands: [0, 1, 2, 3].map(() => ({ thresholdDb: -24, ratio: 1.5, kneeDb: 6, attackMs: 40, releaseMs: 200, makeupDb: 0 })) },
        { type: "limit", inputGainDb: 3, ceilingDbtp: -1, lookaheadMs: 3, releaseMs: 100, truePeak: true },
      ],
      output: { bitDepth: 24, dither: "tpdf" },
    };
    const r = parseChain(design);
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    const mb = r.chain.stages[2];
    expect(mb.type === "multiband" && mb.bands[0].rmsWindowMs).toBe(COMPRESS_FIELDS.rmsWindowMs.default);
    expect(r.chain.stages.every((s) => s.bypass === false)).toBe(true);
    const example = JSON.parse(readFileSync(join(import.meta.dirname, "../../examples/gentle-master.json"), "utf8"));
    expect(errorsOf(example)).toEqual([]);
    expect(parseChain({ stages: [{ type: "limit" }] })).toMatchObject({ ok: true, chain: { stages: [{ ceilingDbtp: LIMIT_FIELDS.ceilingDbtp.default, truePeak: true }], output: { bitDepth: 24, dither: "tpdf" } } });
  });

  it("names the stage index, type and field in each message", () => {
    const errs = errorsOf({
      stages: [
        { type: "trim", gainDb: 30 },
        { type: "eq", bands: [{ shape: "wobble", freqHz: 5, gainDb: 0, q: 1 }] },
        { ...compress, ratio: 0.5, releaseMs: "fast", extra: 1 },
        { type: "multiband", crossoversHz: [1000, 90], bands: [compress] },
        { type: "spin" },
        { type: "limit", ceilingDbtp: 1 },
      ],
      output: { bitDepth: 32, dither: "noise" },
    });
    expect(errs).toEqual(
      expect.arrayContaining([
        "stages[0] (trim).gainDb: must be at most 24",
        'stages[1] (eq).bands[0].shape: must be one of "peak", "lowShelf", "highShelf", "highPass", "lowPass", "notch"',
        "stages[1] (eq).bands[0].freqHz: must be at least 10",
        "stages[2] (compress).ratio: must be at least 1",
        'stages[2] (compress).releaseMs: must be "auto" or a number of ms from 5 to 3000',
        "stages[2] (compress): unknown field extra",
        "stages[3] (multiband).crossoversHz[1]: crossovers must be in ascending order",
        "stages[3] (multiband).bands: 2 crossovers need 3 bands, got 1",
        'stages[4] (spin).type: must be one of "trim", "eq", "saturate", "resonance", "tape", "compress", "multiband", "limit"',
        "stages[5] (limit).ceilingDbtp: must be at most 0",
        'output.bitDepth: must be one of 16, 24, "32f"',
        'output.dither: must be one of "tpdf", "none"',
      ]),
    );
  });

  it("rejects missing required fields and too many crossovers", () => {
    expect(errorsOf({ stages: [{ type: "eq", bands: [{ shape: "peak", gainDb: 0, q: 1 }] }] })).toEqual(["stages[0] (eq).bands[0].freqHz: is required"]);
    expect(errorsOf({ stages: [{ type: "multiband", crossoversHz: [100, 200, 400, 800, 1600], bands: Array(6).fill(compress) }] })).toContain("stages[0] (multiband).crossoversHz: at most 4 crossovers");
    expect(errorsOf({ stages: "none" })).toEqual(["stages: must be a list of stages"]);
  });
});
