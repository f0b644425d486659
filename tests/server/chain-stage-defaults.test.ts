// What the editor adds must be a chain the renderer accepts as it is, and
// its immutable updates must leave the previous state untouched.
import { describe, expect, it } from "vitest";
import { STAGE_TYPES } from "../../dsp/chain/fields.ts";
import { parseChain } from "../../dsp/chain/schema.ts";
import { newEqBand, newMultibandBand, newStage, setAt } from "../../app/components/chain/stage-defaults.ts";

describe("editor stage defaults", () => {
  it("makes a valid stage of every type", () => {
    for (const type of STAGE_TYPES) {
      const result = parseChain({ stages: [newStage(type)] });
      expect(result.ok ? "ok" : JSON.stringify(result.errors)).toBe("ok");
    }
  });

  it("adds EQ and multiband bands the schema accepts", () => {
    const eq = { ...newStage("eq"), bands: [newEqBand(), newEqBand()] };
    const multiband = { ...newStage("multiband"), crossoversHz: [200, 2000, 8000], bands: [newMultibandBand(), newMultibandBand(), newMultibandBand(), newMultibandBand()] };
    expect(parseChain({ stages: [eq, multiband] }).ok).toBe(true);
  });

  it("updates by path without changing the original, and removes a key set to undefined", () => {
    const before = { stages: [{ type: "compress", ratio: 2 }], output: { targetLufs: -14 } };
    const after = setAt(before, ["stages", 0, "ratio"], 3);
    expect(after.stages[0].ratio).toBe(3);
    expect(before.stages[0].ratio).toBe(2);
    expect(after.output).toBe(before.output);
    const cleared = setAt(before, ["output", "targetLufs"], undefined);
    expect(cleared.output).toEqual({});
  });
});
