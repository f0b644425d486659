import { TapeStage, tapeSmallSignalDb } from "../dsp/tape/tape.ts";
import { pinkNoise, rmsDb, toneDb, runBlocks } from "../dsp/test-signals.test-util.ts";
const FS = 48000;
const sine = (n: number, f: number, a: number, fs = FS) => Float64Array.from({ length: n }, (_, i) => a * Math.sin((2 * Math.PI * f * i) / fs));
const base = { driveDb: 6, bumpHz: 80, bumpDb: 3, rolloffHz: 16000 as number | null, blend: 1, oversample: 4 as 2 | 4 };
// small-signal
for (const f of [40, 80, 1000, 10000, 16000]) {
  const s = { ...base, driveDb: 0 };
  const y = runBlocks(new TapeStage(FS, 1, s, 1000), [sine(FS, f, 0.01)], 1000)[0];
  console.log("ss", f, (toneDb(y, 24000, 16384, f, FS) + 40).toFixed(3), tapeSmallSignalDb(s, FS, f).toFixed(3));
}
// thd
for (const d of [0, 3, 6, 9, 12, 15, 18, 21, 24]) {
  const s = { ...base, driveDb: d, bumpDb: 0, rolloffHz: null };
  const y = runBlocks(new TapeStage(FS, 1, s, 1000), [sine(FS, 100, 10 ** (-12 / 20))], 1000)[0];
  const f0 = toneDb(y, 12000, 24000, 100, FS);
  let h = 0;
  for (let k = 2; k <= 15; k++) h += 10 ** (toneDb(y, 12000, 24000, 100 * k, FS) / 10);
  console.log("thd", d, (10 * Math.log10(h) - f0).toFixed(1));
}
// level on pink
const p = pinkNoise(FS * 10, 3, -18);
for (const d of [0, 6, 12, 18, 24]) {
  const y = runBlocks(new TapeStage(FS, 1, { ...base, driveDb: d }, 1000), [p], 1000)[0];
  console.log("pink", d, (rmsDb(y, FS) - rmsDb(p, FS)).toFixed(3));
}
// aliasing at 44.1k
for (const fs of [44100]) for (const lvl of [-18, -12, -6, 0]) {
  const x = sine(fs * 2, 12000, 10 ** (lvl / 20), fs);
  const y = runBlocks(new TapeStage(fs, 1, { ...base, driveDb: 18, bumpDb: 0, rolloffHz: null }, 1000), [x], 1000)[0];
  // spectrum: find max non-harmonic component
  const FFT = (await import("fft.js")).default; const n = 65536; const f = new FFT(n); const fr = new Float64Array(n); let ws=0;
  for (let i = 0; i < n; i++) { const w = 0.5 - 0.5 * Math.cos(2 * Math.PI * i / n); fr[i] = y[fs / 2 + i] * w; ws += w; }
  const out = f.createComplexArray(); f.realTransform(out, fr);
  let worst = -400, at = 0;
  for (let k = 1; k < n / 2; k++) { const hz = k * fs / n; const harm = Math.abs(hz / 12000 - Math.round(hz / 12000)) * 12000 < 20; if (harm) continue; const db = 20 * Math.log10(2 * Math.hypot(out[2 * k], out[2 * k + 1]) / ws); if (db > worst) { worst = db; at = hz; } }
  console.log("alias", fs, lvl, worst.toFixed(1), at.toFixed(0));
}
