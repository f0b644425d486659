import { ResonanceTamer } from "../dsp/resonance/resonance.ts";
import { pinkNoise, thirdOctaveLevelsDb, runBlocks, THIRD_OCTAVES_HZ } from "../dsp/test-signals.test-util.ts";
import { designBiquad } from "../dsp/filters/biquad-design.ts";
import { Biquad } from "../dsp/filters/biquad.ts";
const FS = 48000;
const th = Number(process.argv[2] ?? 4), att = Number(process.argv[3] ?? 20), rel = Number(process.argv[4] ?? 150);
const S = { lowHz: 1000, highHz: 8000, thresholdDb: th, maxCutDb: Number(process.argv[5] ?? 12), attackMs: att, releaseMs: rel, blend: 1, listen: "output" as const };
const align = (y: Float64Array, L: number) => { const o = new Float64Array(y.length - L); o.set(y.subarray(L)); return o; };
// identity
{ const x = pinkNoise(FS * 2, 1, -18); const p = new ResonanceTamer(FS, 1, { ...S, maxCutDb: 0 }, 512); const y = align(runBlocks(p, [x], 333)[0], p.latencyFrames); let m = 0; for (let i = 0; i < y.length; i++) m = Math.max(m, Math.abs(y[i] - x[i])); console.log("identity err dB", 20 * Math.log10(m), p.latencyFrames); }
// impulse
{ const x = new Float64Array(20000); x[5000] = 1; const p = new ResonanceTamer(FS, 1, S, 512); const y = runBlocks(p, [x], 512)[0]; let a = 0; for (let i = 0; i < y.length; i++) if (Math.abs(y[i]) > Math.abs(y[a])) a = i; console.log("impulse at", a - p.latencyFrames, y[a]); }
// pink movement
const secs = 20;
const x = pinkNoise(FS * secs, 5, -18);
{ const p = new ResonanceTamer(FS, 1, S, 512); const y = align(runBlocks(p, [x], 512)[0], p.latencyFrames);
  const a = thirdOctaveLevelsDb(x, FS, FS, y.length), b = thirdOctaveLevelsDb(y, FS, FS, y.length);
  console.log("pink move", THIRD_OCTAVES_HZ.map((f, i) => `${Math.round(f)}:${(b[i] - a[i]).toFixed(2)}`).join(" ")); }
// resonance on/off every 2 s
{ const bq = new Biquad(designBiquad("peak", { freqHz: 3150, gainDb: 15, q: 8 }, FS), 1); const f = x.slice(); bq.process([f], f.length);
  const inp = x.map((v, i) => (Math.floor(i / (2 * FS)) % 2 === 1 ? f[i] : v));
  const p = new ResonanceTamer(FS, 1, S, 512); const y = align(runBlocks(p, [inp], 512)[0], p.latencyFrames);
  const band = THIRD_OCTAVES_HZ.findIndex((c) => Math.abs(c - 3150) < 50);
  let maxOn = 0; const on: string[] = [], off: string[] = [];
  for (let s = 0; s + 2 <= secs - 1; s += 2) {
    const from = (s + 0.5) * FS, to = (s + 2) * FS;
    const a = thirdOctaveLevelsDb(inp, FS, from, to)[band], b = thirdOctaveLevelsDb(y, FS, from, to)[band];
    ((s / 2) % 2 === 1 ? on : off).push((b - a).toFixed(2));
  }
  console.log("on", on.join(" "), "off", off.join(" "));
  const a2 = thirdOctaveLevelsDb(inp, FS, 2.5*FS, 4*FS), b2 = thirdOctaveLevelsDb(y, FS, 2.5*FS, 4*FS);
  console.log("on-segment all bands", THIRD_OCTAVES_HZ.map((f, i) => `${Math.round(f)}:${(b2[i] - a2[i]).toFixed(2)}`).join(" "));
}
