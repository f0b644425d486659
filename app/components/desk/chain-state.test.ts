import { describe, expect, it } from "vitest";
import { COMPRESS_FIELDS, EQ_BAND_FIELDS } from "../../../dsp/chain/fields.ts";
import { checkChain, nudge, soloedBands, withoutSolo, type EditableChain } from "./chain-state.ts";

describe("desk nudges", () => {
  it("moves by the field's step, a tenth with Shift, clamped to the range", () => {
    expect(nudge(-18, COMPRESS_FIELDS.thresholdDb, 1, false)).toBe(-17.5);
    expect(nudge(-18, COMPRESS_FIELDS.thresholdDb, -1, true)).toBe(-18.05);
    expect(nudge(-0.2, COMPRESS_FIELDS.thresholdDb, 3, false)).toBe(0);
    expect(nudge(2, COMPRESS_FIELDS.ratio, 3, false)).toBe(2.3);
    // A fine value moves by whole steps without snapping to the coarse grid.
    expect(nudge(-25.05, COMPRESS_FIELDS.thresholdDb, -6, false)).toBe(-28.05);
  });
  it("moves frequencies by fractions of an octave", () => {
    expect(nudge(1000, EQ_BAND_FIELDS.freqHz, 24, false)).toBe(2000);
    expect(nudge(1000, EQ_BAND_FIELDS.freqHz, -96, true)).toBe(500);
    expect(nudge(10, EQ_BAND_FIELDS.freqHz, -1, false)).toBe(10);
  });
});

describe("what the desk saves", () => {
  const chain: EditableChain = {
    stages: [
      { type: "multiband", crossoversHz: [200], bands: [{ thresholdDb: -20, ratio: 2, kneeDb: 6, attackMs: 10, releaseMs: 100, makeupDb: 0, rmsWindowMs: 20, solo: true }, { thresholdDb: -20, ratio: 2, kneeDb: 6, attackMs: 10, releaseMs: 100, makeupDb: 0, rmsWindowMs: 20 }] },
    ],
    output: {},
  };
  it("finds a soloed band and releases it", () => {
    expect(soloedBands(chain)).toEqual([{ stage: 0, band: 0 }]);
    expect(soloedBands(withoutSolo(chain))).toEqual([]);
  });
  it("keys errors as the server does", () => {
    const bad = structuredClone(chain);
    (bad.stages[0].bands as Record<string, unknown>[])[1].ratio = 40;
    const checked = checkChain(bad);
    expect(checked.ok).toBe(false);
    if (!checked.ok) expect(checked.errors["stages[0].bands[1].ratio"]).toBe("must be at most 20");
  });
});
