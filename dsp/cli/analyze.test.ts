// `tidemark analyze` and analyzeFile on files made by Debian's sox (an
// independent writer), checked against analytic levels and ebur128-wasm.
import { execFile, execFileSync } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { promisify } from "node:util";
import { afterAll, describe, expect, it } from "vitest";
import { mixedSignal } from "../../bench/signals.ts";
import { analyzeFile } from "../analysis.ts";
import { openWav } from "../io/wav-reader.ts";
import { createWavWriter } from "../io/wav-writer.ts";
import { referenceIntegratedLufs, referenceTruePeakDbtp } from "../loudness/ebur128-reference.ts";

const run = promisify(execFile);
const root = join(import.meta.dirname, "..", "..");
const bin = join(root, "bin", "tidemark.js");
const dir = mkdtempSync(join(tmpdir(), "tidemark-cli-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

let hasSox = true;
try {
  execFileSync("sox", ["--version"], { stdio: "ignore" });
} catch {
  hasSox = false;
  console.warn("sox is not installed: the sox-made file checks are skipped (npm test installs sox)");
}

function sox(name: string, args: string[]): string {
  const path = join(dir, name);
  execFileSync("sox", ["-n", ...args.slice(0, args.indexOf("synth")), path, ...args.slice(args.indexOf("synth"))], { stdio: "pipe" });
  return path;
}

async function cli(args: string[]): Promise<{ code: number; stdout: string; stderr: string }> {
  try {
    const { stdout, stderr } = await run(process.execPath, [bin, ...args], { cwd: root });
    return { code: 0, stdout, stderr };
  } catch (err) {
    const e = err as { code: number; stdout: string; stderr: string };
    return { code: e.code, stdout: e.stdout, stderr: e.stderr };
  }
}

async function decode(path: string): Promise<Float32Array[]> {
  const r = await openWav(path);
  const out = Array.from({ length: r.format.channels }, () => new Float64Array(r.format.frames));
  await r.read(out, r.format.frames);
  await r.close();
  return out.map((c) => Float32Array.from(c));
}

describe.skipIf(!hasSox)("analyze on sox-made files", () => {
  const sines: Array<[string, string[], { rate: number; ch: number; bits: number; fmt: string; lufs: number }]> = [
    // 1 kHz sine at −20 dBFS: stereo reads −20.0 LUFS, mono −23.0 (BS.1770-4, channel weight 1.0).
    ["s16.wav", ["-r", "44100", "-b", "16", "-c", "2", "synth", "6", "sine", "1000", "gain", "-20"], { rate: 44100, ch: 2, bits: 16, fmt: "PCM 16-bit", lufs: -20 }],
    ["s24.wav", ["-r", "96000", "-b", "24", "-c", "1", "synth", "6", "sine", "1000", "gain", "-20"], { rate: 96000, ch: 1, bits: 24, fmt: "PCM 24-bit", lufs: -23.01 }],
    ["s32.wav", ["-r", "48000", "-b", "32", "-e", "signed-integer", "-c", "2", "synth", "6", "sine", "1000", "gain", "-20"], { rate: 48000, ch: 2, bits: 32, fmt: "PCM 32-bit", lufs: -20 }],
    ["f32.wav", ["-r", "192000", "-b", "32", "-e", "floating-point", "-c", "2", "synth", "6", "sine", "1000", "gain", "-20"], { rate: 192000, ch: 2, bits: 32, fmt: "float 32-bit", lufs: -20 }],
  ];
  for (const [name, args, want] of sines) {
    it(`${want.fmt}, ${want.ch} ch, ${want.rate} Hz sine → ${want.lufs} LUFS, sample peak −20 dBFS`, async () => {
      const path = sox(name, args);
      const { code, stdout, stderr } = await cli(["analyze", path]);
      expect(stderr).toBe("");
      expect(code).toBe(0);
      const r = JSON.parse(stdout);
      expect(Object.keys(r).sort()).toEqual([
        "bitDepth", "channels", "correlation", "durationS", "format", "integratedLufs", "loudnessRangeLu",
        "maxMomentaryLufs", "maxShortTermLufs", "reconstructedPeakDb", "samplePeakDbfs", "sampleRate", "thirdOctave", "truePeakDbtp",
      ].sort());
      // Third-octave spectrum (IEC 61260-1 bands, dB re a full-scale sine per AES17): the sine's own band reads −20.0.
      expect(r.thirdOctave).toHaveLength(30);
      expect(r.thirdOctave[16]).toEqual({ centreHz: 1000, levelDb: expect.any(Number) });
      expect(Math.abs(r.thirdOctave[16].levelDb + 20)).toBeLessThanOrEqual(0.2);
      expect(r.thirdOctave[14].levelDb).toBeLessThan(-45);
      expect(r).toMatchObject({ sampleRate: want.rate, channels: want.ch, bitDepth: want.bits, format: want.fmt, durationS: 6, correlation: 1 });
      expect(Math.abs(r.integratedLufs - want.lufs)).toBeLessThanOrEqual(0.1);
      // sox dithers/rounds when it writes, and the report rounds to 0.01 dB.
      expect(Math.abs(r.samplePeakDbfs + 20)).toBeLessThanOrEqual(0.02);
      expect(Math.abs(r.truePeakDbtp + 20)).toBeLessThanOrEqual(0.05);
      expect(Math.abs(r.reconstructedPeakDb + 20)).toBeLessThanOrEqual(0.05);
      expect(r.loudnessRangeLu).toBeLessThan(0.1);
    });
  }

  it("white and pink noise agree with ebur128-wasm within 0.1 LU / 0.1 dB", async () => {
    const files = [
      sox("wn.wav", ["-r", "48000", "-b", "24", "-c", "2", "synth", "8", "whitenoise", "gain", "-12"]),
      sox("pn.wav", ["-r", "44100", "-b", "16", "-c", "2", "synth", "8", "pinknoise", "gain", "-6"]),
    ];
    for (const path of files) {
      const a = await analyzeFile(path);
      const samples = await decode(path);
      expect(Math.abs(a.integratedLufs - referenceIntegratedLufs(a.sampleRate, samples))).toBeLessThanOrEqual(0.1);
      expect(Math.abs(a.truePeakDbtp - referenceTruePeakDbtp(a.sampleRate, samples))).toBeLessThanOrEqual(0.1);
    }
  });
});

describe("analyzeFile", () => {
  it("blocks of 1, 137 and 4096 frames give identical numbers; progress reaches 1", async () => {
    const path = join(dir, "mixed.wav");
    const w = await createWavWriter(path, { sampleRate: 48000, channels: 2, bitDepth: 24, float: false });
    await w.write([mixedSignal(24000, 48000, 1), mixedSignal(24000, 48000, 2)], 24000);
    await w.close();
    const progress: number[] = [];
    const a = await analyzeFile(path, { blockFrames: 4096, onProgress: (f) => progress.push(f) });
    expect(progress.at(-1)).toBe(1);
    expect(await analyzeFile(path, { blockFrames: 137 })).toEqual(a);
    expect(await analyzeFile(path, { blockFrames: 1 })).toEqual(a);
    expect(a).toMatchObject({ durationS: 0.5, sampleRate: 48000, channels: 2, bitDepth: 24, format: "PCM 24-bit" });
  });
});

describe("tidemark analyze: JSON and exit codes", () => {
  it("silence reports null levels with notes, never NaN", async () => {
    const path = join(dir, "silence.wav");
    const w = await createWavWriter(path, { sampleRate: 44100, channels: 2, bitDepth: 16, float: false });
    await w.write([new Float64Array(44100), new Float64Array(44100)], 44100);
    await w.close();
    const { code, stdout } = await cli(["analyze", path]);
    expect(code).toBe(0);
    expect(stdout).not.toMatch(/NaN|Infinity/);
    const r = JSON.parse(stdout);
    expect(r.integratedLufs).toBeNull();
    expect(r.truePeakDbtp).toBeNull();
    expect(r.samplePeakDbfs).toBeNull();
    expect(r.notes.join(" ")).toMatch(/integratedLufs is below measurement/);
    expect(r.notes.join(" ")).toMatch(/correlation is undefined/);
  });

  it("a bad file exits 2 with the specific error on stderr; a missing file exits 2; no file exits 1", async () => {
    const bad = join(dir, "bad.wav");
    writeFileSync(bad, "this is plainly not audio");
    const r1 = await cli(["analyze", bad]);
    expect(r1.code).toBe(2);
    expect(r1.stdout).toBe("");
    expect(r1.stderr).toMatch(/not a WAV file .*\[not-riff\]/);
    const r2 = await cli(["analyze", join(dir, "nope.wav")]);
    expect(r2.code).toBe(2);
    expect(r2.stderr).toMatch(/no such file/);
    const r3 = await cli(["analyze"]);
    expect(r3.code).toBe(1);
    expect(r3.stderr).toMatch(/usage/);
    const r4 = await cli(["frobnicate"]);
    expect(r4.code).toBe(1);
  });
});
