// Traces of two renders on one axis. The renders are made here with our own
// compressor (dsp/dynamics), stepped on the renderer's 10 ms grid: a print of
// the whole mix and a preview of a region, so their traces start at different
// mix times, as stored renders do.
import { describe, expect, it } from "vitest";
import { Compressor } from "../../dsp/dynamics/compressor.ts";
import { alignTraces, peakTimeS, type RenderTraces } from "../../app/lib/compare/traces.ts";
import { labelChanges } from "../../app/lib/compare/chain-changes.ts";
import { diffParams } from "../../app/models/chain.server.ts";

const SR = 48_000;
const GRID_MS = 10;
const GRID_FRAMES = (SR * GRID_MS) / 1000;
const TRANSIENT_S = 12.34;

/** 16 s of a quiet 220 Hz bed with a 60 ms burst at TRANSIENT_S. */
function mix(): Float64Array[] {
  const x = new Float64Array(16 * SR);
  for (let i = 0; i < x.length; i++) {
    const t = i / SR;
    const amp = t >= TRANSIENT_S && t < TRANSIENT_S + 0.06 ? 0.7 : 0.03;
    x[i] = amp * Math.sin(2 * Math.PI * 220 * t);
  }
  return [x, x.slice()];
}

/** Renders [startS, endS) of the mix through a fast compressor; its trace as the renderer stores it. */
function render(source: Float64Array[], startS: number, endS: number, thresholdDb: number): RenderTraces {
  const comp = new Compressor(SR, 2, { thresholdDb, ratio: 4, kneeDb: 2, attackMs: 1, releaseMs: 80, makeupDb: 0, rmsWindowMs: 5 }, GRID_FRAMES);
  const block = [new Float64Array(GRID_FRAMES), new Float64Array(GRID_FRAMES)];
  const out = new Float64Array(1);
  const gr: number[] = [];
  for (let pos = Math.round(startS * SR); pos + GRID_FRAMES <= Math.round(endS * SR); pos += GRID_FRAMES) {
    for (let c = 0; c < 2; c++) block[c].set(source[c].subarray(pos, pos + GRID_FRAMES));
    comp.process(block, GRID_FRAMES);
    comp.takeGainReductionDb(out);
    gr.push(out[0]);
  }
  return { gridMs: GRID_MS, stages: [{ index: 0, type: "compress", names: ["gr"], gainReductionDb: [gr] }] };
}

describe("alignTraces", () => {
  const samples = mix();
  const print = render(samples, 0, 16, -20);
  const preview = render(samples, 10, 16, -24);

  it("puts the transient of a preview and of a print at the same time on the mix axis", () => {
    const aligned = alignTraces({ traces: print, offsetS: 0 }, { traces: preview, offsetS: 10 });
    const panel = aligned.panels.find((p) => p.id === "s0:gr")!;
    expect(panel).toMatchObject({ a: "A:s0:gr", b: "B:s0:gr" });
    const a = peakTimeS(aligned, panel.a!)!;
    const b = peakTimeS(aligned, panel.b!)!;
    expect(a).toBe(b);
    // And inside the 60 ms burst itself (the reduction grows over the burst).
    expect(a).toBeGreaterThanOrEqual(TRANSIENT_S - 1e-9);
    expect(a).toBeLessThan(TRANSIENT_S + 0.06);
    // In its own time the preview's peak is 10 s earlier: the offset is what lines them up.
    const own = preview.stages[0].gainReductionDb[0];
    expect(own.indexOf(Math.max(...own)) * 0.01).toBeCloseTo(a - 10, 6);
    // Before the preview's region there is no value for B (a gap, not a zero).
    expect(aligned.rows[0]).toMatchObject({ timeS: 0, "B:s0:gr": null });
    expect(aligned.rows.at(-1)!.timeS).toBeCloseTo(15.99, 6);
  });

  it("thins to at most maxPoints rows keeping the largest reduction of each bucket", () => {
    const full = alignTraces({ traces: print, offsetS: 0 }, { traces: preview, offsetS: 10 });
    const thin = alignTraces({ traces: print, offsetS: 0 }, { traces: preview, offsetS: 10 }, { maxPoints: 200 });
    expect(thin.rows.length).toBeLessThanOrEqual(200);
    expect(thin.gridMs).toBe(80);
    const maxOf = (rows: typeof full.rows, key: string) => Math.max(...rows.map((r) => r[key] ?? 0));
    expect(maxOf(thin.rows, "A:s0:gr")).toBe(maxOf(full.rows, "A:s0:gr"));
    expect(Math.abs(peakTimeS(thin, "A:s0:gr")! - TRANSIENT_S)).toBeLessThan(0.08);
  });

  it("folds a finer grid onto the coarser one and adds the loudness curve as its own panel", () => {
    const coarse: RenderTraces = { gridMs: 20, stages: [{ index: 1, type: "limit", names: ["gr"], gainReductionDb: [[0, 1, 0, 0]] }], shortTermLufs: [-30, -20, null, -25] };
    const fine: RenderTraces = { gridMs: 10, stages: [{ index: 1, type: "limit", names: ["gr"], gainReductionDb: [[0, 0, 0.5, 2, 0, 0, 0, 0]] }] };
    const aligned = alignTraces({ traces: coarse, offsetS: 0 }, { traces: fine, offsetS: 0 });
    expect(aligned.gridMs).toBe(20);
    expect(aligned.rows.map((r) => r["B:s1:gr"])).toEqual([0, 2, 0, 0]);
    expect(aligned.rows.map((r) => r["A:loudness"])).toEqual([-30, -20, null, -25]);
    expect(aligned.panels.map((p) => p.id)).toEqual(["s1:gr", "loudness"]);
  });
});

describe("alignTraces against a mix", () => {
  it("limits the axis to the span both cover, and takes a mix's loudness curve with no stages", () => {
    const samples = mix();
    const preview = render(samples, 10, 16, -24);
    // A mix: nothing processed it, so only its short-term curve (16 s on the 10 ms grid).
    const mixTraces: RenderTraces = { gridMs: GRID_MS, stages: [], shortTermLufs: Array.from({ length: 1600 }, (_, j) => -30 + j / 100) };
    const aligned = alignTraces({ traces: preview, offsetS: 10 }, { traces: mixTraces, offsetS: 0 }, { shared: true });
    expect([aligned.startS, aligned.endS]).toEqual([10, 16]);
    expect(aligned.rows[0].timeS).toBe(10);
    expect(aligned.panels.map((p) => [p.id, p.a, p.b])).toEqual([
      ["s0:gr", "A:s0:gr", null],
      ["loudness", null, "B:loudness"],
    ]);
    // The mix's curve keeps its own times: the value at 12 s is its 1200th step.
    const at12 = aligned.rows.find((r) => Math.abs(r.timeS - 12) < 1e-9)!;
    expect(at12["B:loudness"]).toBeCloseTo(-30 + 1200 / 100, 9);
    // Without `shared`, everything either covers.
    expect(alignTraces({ traces: preview, offsetS: 10 }, { traces: mixTraces, offsetS: 0 }).startS).toBe(0);
  });
});

describe("labelChanges", () => {
  it("names the stage, band and unit of each changed parameter", () => {
    const before = { stages: [{ type: "eq", bands: [{ freqHz: 100, gainDb: 1 }] }, { type: "compress", ratio: 1.5, releaseMs: "auto" }], output: { bitDepth: 24 } };
    const after = { stages: [{ type: "eq", bands: [{ freqHz: 120, gainDb: 1 }] }, { type: "compress", ratio: 2, releaseMs: 120 }], output: { bitDepth: 16 } };
    const labelled = labelChanges(diffParams(before, after), before, after);
    expect(labelled.map((c) => [c.label, c.beforeText, c.afterText])).toEqual([
      ["Stage 1 · eq · band 1 · freqHz", "100 Hz", "120 Hz"],
      ["Stage 2 · compress · ratio", "1.5", "2"],
      ["Stage 2 · compress · releaseMs", "auto", "120 ms"],
      ["Output · bitDepth", "24", "16"],
    ]);
    expect(labelled[1]).toMatchObject({ stageNumber: 2, stageType: "compress", change: "changed" });
  });
});
