// The resonance and tape stages in the chain schema, the chain builder and
// the print rule.
import { describe, expect, it } from "vitest";
import { ResonanceTamer } from "../resonance/resonance.ts";
import { roundTripLatency } from "../saturate/oversampler.ts";
import { TapeStage } from "../tape/tape.ts";
import { buildChain } from "./build-chain.ts";
import { RESONANCE_FIELDS, TAPE_FIELDS } from "./fields.ts";
import { printRefusal } from "./print-check.ts";
import { parseChain } from "./schema.ts";

function errorsOf(json: unknown): string[] {
  const r = parseChain(json);
  return r.ok ? [] : r.errors.map((e) => `${e.path}: ${e.message}`);
}

describe("resonance and tape in the chain schema", () => {
  it("fills every default from fields.ts", () => {
    const r = parseChain({ stages: [{ type: "resonance" }, { type: "tape" }] });
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.chain.stages[0]).toEqual({
      type: "resonance",
      bypass: false,
      lowHz: RESONANCE_FIELDS.lowHz.default,
      highHz: RESONANCE_FIELDS.highHz.default,
      thresholdDb: RESONANCE_FIELDS.thresholdDb.default,
      maxCutDb: RESONANCE_FIELDS.maxCutDb.default,
      attackMs: RESONANCE_FIELDS.attackMs.default,
      releaseMs: RESONANCE_FIELDS.releaseMs.default,
      blend: RESONANCE_FIELDS.blend.default,
      listen: "output",
    });
    expect(r.chain.stages[1]).toEqual({
      type: "tape",
      bypass: false,
      driveDb: TAPE_FIELDS.driveDb.default,
      bumpHz: TAPE_FIELDS.bumpHz.default,
      bumpDb: TAPE_FIELDS.bumpDb.default,
      rolloffHz: TAPE_FIELDS.rolloffHz.default,
      blend: TAPE_FIELDS.blend.default,
      oversample: 4,
    });
    expect(parseChain({ stages: [{ type: "tape", rolloffHz: null }] })).toMatchObject({ ok: true, chain: { stages: [{ rolloffHz: null }] } });
  });

  it("names the stage and field of each bad value", () => {
    expect(
      errorsOf({
        stages: [
          { type: "resonance", lowHz: 50, thresholdDb: 30, maxCutDb: -1, blend: 2, listen: "sides" },
          { type: "resonance", lowHz: 4000, highHz: 2000 },
          { type: "tape", driveDb: 25, bumpHz: 20, bumpDb: 7, rolloffHz: 5000, oversample: 8, wow: 1 },
        ],
      }),
    ).toEqual(
      expect.arrayContaining([
        "stages[0] (resonance).lowHz: must be at least 100",
        "stages[0] (resonance).thresholdDb: must be at most 24",
        "stages[0] (resonance).maxCutDb: must be at least 0",
        "stages[0] (resonance).blend: must be at most 1",
        'stages[0] (resonance).listen: must be one of "output", "removed"',
        "stages[1] (resonance).highHz: must be above the focus's lower limit (4000 Hz)",
        "stages[2] (tape).driveDb: must be at most 24",
        "stages[2] (tape).bumpHz: must be at least 30",
        "stages[2] (tape).bumpDb: must be at most 6",
        "stages[2] (tape).rolloffHz: must be at least 8000",
        "stages[2] (tape).oversample: must be 2 or 4",
        "stages[2] (tape): unknown field wow",
      ]),
    );
  });
});

describe("resonance and tape in buildChain", () => {
  it("builds both as gain-reduction sources (the resonance stage's deepest cut, the tape curve's compression), and sums their latency", () => {
    const r = parseChain({ stages: [{ type: "resonance" }, { type: "tape", oversample: 2 }, { type: "tape", bypass: true }] });
    if (!r.ok) throw new Error("chain");
    const built = buildChain(r.chain, 48000, 2, 480);
    expect(built.stages.map((s) => s.type)).toEqual(["resonance", "tape"]);
    expect(built.stages[0].processor).toBeInstanceOf(ResonanceTamer);
    expect(built.stages[0].gainReduction?.traceNames).toEqual(["cut"]);
    expect(built.stages[1].processor).toBeInstanceOf(TapeStage);
    expect(built.stages[1].gainReduction?.traceNames).toEqual(["curve"]);
    // 2048 frames of STFT (42.7 ms) + the 2× round trip.
    expect(built.latencyFrames).toBe(2048 + roundTripLatency(2));
  });
});

describe("print rule", () => {
  it('refuses a print while a resonance stage listens to "removed", and only then', () => {
    const removed = { stages: [{ type: "trim" }, { type: "resonance", listen: "removed" }] } as const;
    expect(printRefusal(removed)).toMatch(/Stage 2 \(resonance\) listens to what it removes.*"output"/);
    expect(printRefusal({ stages: [{ type: "resonance", listen: "removed", bypass: true }] })).toBeNull();
    expect(printRefusal({ stages: [{ type: "resonance", listen: "output" }, { type: "resonance" }] })).toBeNull();
    expect(printRefusal(undefined)).toBeNull();
  });
});
