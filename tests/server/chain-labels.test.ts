// Paths of chain parameters in words and values with units, as the revision diff shows them.
import { describe, expect, it } from "vitest";
import { describePath, editorPath, formatValue } from "../../app/components/chain/labels.ts";

const chain = { stages: [{ type: "eq" }, { type: "compress" }, { type: "multiband" }] };

describe("chain labels", () => {
  it("names the stage, band and field of a path", () => {
    expect(describePath("stages[2].bands[1].ratio", [chain])).toEqual({ where: "Stage 3 (Multiband compressor) · Band 2", label: "Ratio", unit: ":1" });
    expect(describePath("stages[2].crossoversHz[0]", [chain])).toEqual({ where: "Stage 3 (Multiband compressor)", label: "Crossover 1", unit: "Hz" });
    expect(describePath("output.targetLufs", [chain])).toEqual({ where: "Output", label: "Target loudness", unit: "LUFS" });
  });

  it("labels the resonance and tape stages' own fields by their stage", () => {
    const both = { stages: [{ type: "resonance" }, { type: "tape" }, { type: "compress" }] };
    expect(describePath("stages[0].thresholdDb", [both])).toEqual({ where: "Stage 1 (Resonance taming)", label: "Peak threshold", unit: "dB" });
    expect(describePath("stages[0].listen", [both])).toEqual({ where: "Stage 1 (Resonance taming)", label: "Listen to", unit: "" });
    expect(describePath("stages[1].rolloffHz", [both])).toEqual({ where: "Stage 2 (Tape colour)", label: "High-frequency loss", unit: "Hz" });
    expect(describePath("stages[2].thresholdDb", [both]).label).toBe("Threshold");
  });

  it("takes the stage type from the chain before when the stage was removed", () => {
    expect(describePath("stages[3].ceilingDbtp", [{ stages: [] }, { stages: [{}, {}, {}, { type: "limit" }] }]).where).toBe("Stage 4 (Limiter)");
  });

  it("formats values with their units", () => {
    expect(formatValue(1.8, ":1")).toBe("1.8:1");
    expect(formatValue(-1, "dBTP")).toBe("-1 dBTP");
    expect(formatValue("auto", "ms")).toBe("auto");
    expect(formatValue(null, "Hz")).toBe("—");
    expect(formatValue(true, "")).toBe("on");
  });

  it("turns the schema's error paths into the editor's", () => {
    expect(editorPath("stages[2] (multiband).bands[1].ratio")).toBe("stages[2].bands[1].ratio");
  });
});
