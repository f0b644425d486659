// Progressive loading of the A/B player's sources, in Node: WAV files written
// by our own writer, served by a fake fetch that answers byte ranges as the
// app's audio routes do, and "decoded" by our own streaming WAV reader (the
// browser's decodeAudioData is checked in compare-player-browser.test.ts).
// Checks that the first part holds exactly the first seconds of the shared
// span, the rest completes it sample for sample, only the span's bytes are
// fetched, each once, and a server without ranges still works.
import { mkdtemp, readFile, rm, writeFile } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createWavWriter } from "../../dsp/io/wav-writer.ts";
import { openWav } from "../../dsp/io/wav-reader.ts";
import type { BufferLike } from "../../app/components/player/ab-engine.ts";
import { FIRST_SEGMENT_S, HEADER_PROBE_BYTES, openPair, parseWavLayout, wavFromFrames, type Io } from "../../app/components/player/progressive-wav.ts";

const SR = 48_000;
let dir: string;
const files: Record<string, Buffer> = {};

/** A ramp that names its own frame: sample i of channel c is ((i + 7c) mod 8000) / 8000 − 0.5, so any misplaced frame shows. */
const valueAt = (i: number, c: number) => (((i + 7 * c) % 8000) / 8000 - 0.5) * 0.9;

async function writeRamp(name: string, seconds: number, bitDepth: 16 | 24, extensible = false) {
  const path = join(dir, name);
  const frames = seconds * SR;
  const writer = await createWavWriter(path, { sampleRate: SR, channels: 2, bitDepth, float: false, extensible });
  const block = 8192;
  const out = [new Float64Array(block), new Float64Array(block)];
  for (let start = 0; start < frames; start += block) {
    const n = Math.min(block, frames - start);
    for (let i = 0; i < n; i++) for (let c = 0; c < 2; c++) out[c][i] = valueAt(start + i, c);
    await writer.write(out, n);
  }
  await writer.close();
  files[name] = await readFile(path);
}

/** A 64-bit float WAV of the ramp, written by hand (our writer makes 32-bit float only), plain or extensible. */
function float64Ramp(name: string, seconds: number, extensible: boolean) {
  const frames = seconds * SR, channels = 2;
  const body = extensible ? 40 : 16;
  const header = 12 + 8 + body + 8;
  const buf = Buffer.alloc(header + frames * channels * 8);
  buf.write("RIFF", 0, "latin1");
  buf.writeUInt32LE(buf.length - 8, 4);
  buf.write("WAVE", 8, "latin1");
  buf.write("fmt ", 12, "latin1");
  buf.writeUInt32LE(body, 16);
  buf.writeUInt16LE(extensible ? 0xfffe : 3, 20);
  buf.writeUInt16LE(channels, 22);
  buf.writeUInt32LE(SR, 24);
  buf.writeUInt32LE(SR * channels * 8, 28);
  buf.writeUInt16LE(channels * 8, 32);
  buf.writeUInt16LE(64, 34);
  if (extensible) {
    buf.writeUInt16LE(22, 36); // cbSize
    buf.writeUInt16LE(64, 38); // valid bits
    buf.writeUInt32LE(3, 40); // channel mask: front left and right
    // KSDATAFORMAT_SUBTYPE_IEEE_FLOAT: 00000003-0000-0010-8000-00aa00389b71 (Microsoft's WAVEFORMATEXTENSIBLE, from memory)
    Buffer.from("0300000000001000800000aa00389b71", "hex").copy(buf, 44);
  }
  buf.write("data", 12 + 8 + body, "latin1");
  buf.writeUInt32LE(frames * channels * 8, 12 + 8 + body + 4);
  for (let i = 0; i < frames; i++) for (let c = 0; c < channels; c++) buf.writeDoubleLE(valueAt(i, c), header + (i * channels + c) * 8);
  files[name] = buf;
}

type Served = { url: string; range: string | null; bytes: number }[];

/** Serves `files` by name; with `ranges` false, ignores Range and sends the whole file (200). */
let decodes = 0;

function fakeIo(log: Served, ranges = true): Io {
  return {
    async fetch(url, init) {
      const file = files[url.replace(/^\//, "")];
      if (!file) return new Response("missing", { status: 404 });
      const range = new Headers(init.headers).get("Range");
      const m = ranges && range ? /^bytes=(\d+)-(\d+)$/.exec(range) : null;
      if (!m) {
        log.push({ url, range: null, bytes: file.length });
        return new Response(new Uint8Array(file), { status: 200 });
      }
      const start = Number(m[1]);
      const end = Math.min(Number(m[2]), file.length - 1);
      log.push({ url, range, bytes: end - start + 1 });
      return new Response(new Uint8Array(file.subarray(start, end + 1)), { status: 206, headers: { "Content-Range": `bytes ${start}-${end}/${file.length}` } });
    },
    async decode(wav) {
      // Our reader as the decoder: the bytes must be a WAV it accepts.
      const path = join(dir, `decoded-${decodes++}.wav`);
      await writeFile(path, new Uint8Array(wav));
      const reader = await openWav(path);
      const { frames, sampleRate, channels } = reader.format;
      const data = Array.from({ length: channels }, () => new Float32Array(frames));
      const block = [new Float64Array(8192), new Float64Array(8192)].slice(0, channels);
      for (let at = 0; ; ) {
        const got = await reader.read(block, 8192);
        if (got === 0) break;
        block.forEach((b, c) => data[c].set(b.subarray(0, got), at));
        at += got;
      }
      await reader.close();
      await rm(path);
      return { duration: frames / sampleRate, sampleRate, numberOfChannels: channels, length: frames, getChannelData: (c: number) => data[c] } satisfies BufferLike;
    },
  };
}

/** Largest difference between a buffer and the ramp it should hold from `firstFrame` of the file. */
function worstError(buffer: BufferLike, firstFrame: number): number {
  let worst = 0;
  for (let c = 0; c < buffer.numberOfChannels; c++) {
    const data = buffer.getChannelData(c);
    for (let i = 0; i < data.length; i += 97) worst = Math.max(worst, Math.abs(data[i] - valueAt(firstFrame + i, c)));
  }
  return worst;
}

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), "tidemark-progressive-"));
  await writeRamp("print.wav", 40, 24);
  await writeRamp("mix.wav", 40, 24, true);
  await writeRamp("preview.wav", 20, 16);
  await writeRamp("short.wav", 5, 16);
  float64Ramp("float64.wav", 20, false);
  float64Ramp("float64-ext.wav", 20, true);
});

afterAll(async () => {
  if (dir) await rm(dir, { recursive: true, force: true });
});

describe("WAV layout and segments", () => {
  it("finds the format and the samples' start, and wraps a stretch of frames as a WAV of its own", async () => {
    const file = files["mix.wav"];
    const layout = parseWavLayout(file.subarray(0, 4096), file.length)!;
    expect(layout).toMatchObject({ sampleRate: SR, channels: 2, blockAlign: 6, frames: 40 * SR });
    // WAVE_FORMAT_EXTENSIBLE: a 40-byte format body, copied whole.
    expect(layout.fmtChunk.length).toBe(8 + 40);
    const segment = wavFromFrames(layout, file.subarray(layout.dataOffset + 1000 * 6, layout.dataOffset + 2000 * 6 + 3));
    const decoded = await fakeIo([]).decode(segment);
    // The three stray bytes are not a whole frame and are left out.
    expect(decoded.length).toBe(1000);
    expect(worstError(decoded, 1000)).toBeLessThan(1e-6);
    expect(parseWavLayout(new TextEncoder().encode("liner notes, not audio"), 22)).toBeNull();
  });
});

describe("64-bit float sources (Chromium's decoder refuses them: see compare-player-browser.test.ts)", () => {
  it.each(["float64.wav", "float64-ext.wav"])("%s: segments go out as 32-bit float WAVs holding the same samples rounded to float32", async (name) => {
    const file = files[name];
    const layout = parseWavLayout(file.subarray(0, 4096), file.length)!;
    expect(layout).toMatchObject({ sampleRate: SR, channels: 2, blockAlign: 16, frames: 20 * SR, float64: true });
    const segment = wavFromFrames(layout, file.subarray(layout.dataOffset + 1000 * 16, layout.dataOffset + 3000 * 16));
    const out = parseWavLayout(new Uint8Array(segment), segment.byteLength)!;
    expect(out).toMatchObject({ channels: 2, blockAlign: 8, frames: 2000, float64: false });
    expect(new DataView(segment).getUint16(20, true)).toBe(3);
    const decoded = await fakeIo([]).decode(segment);
    for (let c = 0; c < 2; c++) for (let i = 0; i < 2000; i += 37) expect(decoded.getChannelData(c)[i]).toBe(Math.fround(valueAt(1000 + i, c)));
  });

  it("a 64-bit float mix opens against a print like any other source", async () => {
    const opened = await openPair({ A: { url: "/float64.wav", offsetS: 0 }, B: { url: "/print.wav", offsetS: 0 } }, fakeIo([]));
    expect(opened.span).toEqual({ startS: 0, endS: 20 });
    expect(worstError(opened.first.A.buffer, 0)).toBeLessThan(1e-7);
    const rest = await opened.rest.A!;
    expect(rest.buffer.length).toBe(20 * SR);
    expect(worstError(rest.buffer, 0)).toBeLessThan(1e-7);
  });
});

describe("opening a pair progressively", () => {
  it("decodes the first seconds first, then the whole span, fetching only ranges and each byte once", async () => {
    const log: Served = [];
    const opened = await openPair({ A: { url: "/print.wav", offsetS: 0 }, B: { url: "/mix.wav", offsetS: 0 } }, fakeIo(log));
    expect(opened.span).toEqual({ startS: 0, endS: 40 });
    for (const id of ["A", "B"] as const) {
      expect(opened.first[id]).toMatchObject({ offsetS: 0, complete: false, whole: { startS: 0, endS: 40 } });
      expect(opened.first[id].buffer.duration).toBeCloseTo(FIRST_SEGMENT_S, 6);
      expect(worstError(opened.first[id].buffer, 0)).toBeLessThan(1e-6);
    }
    // Per file: the header probe, the first 12 s, and (already on its way) the rest — all ranges.
    expect(log.every((r) => r.range !== null)).toBe(true);
    const ofPrint = log.filter((r) => r.url === "/print.wav").map((r) => r.bytes);
    expect(ofPrint).toEqual([HEADER_PROBE_BYTES, FIRST_SEGMENT_S * SR * 6, (40 - FIRST_SEGMENT_S) * SR * 6]);
    const rest = await Promise.all([opened.rest.A!, opened.rest.B!]);
    for (const part of rest) {
      expect(part.complete).toBe(true);
      expect(part.buffer.length).toBe(40 * SR);
      expect(worstError(part.buffer, 0)).toBeLessThan(1e-6);
    }
    // The header probes overlap the first samples; apart from them, every byte of the two files was fetched once.
    const fetched = log.reduce((s, r) => s + r.bytes, 0);
    expect(fetched).toBeLessThanOrEqual(files["print.wav"].length + files["mix.wav"].length + 2 * HEADER_PROBE_BYTES);
  });

  it("fetches of a mix only the span it shares with a preview of a region", async () => {
    const log: Served = [];
    // A preview of 10–30 s against its 40 s mix: the span is the preview's region.
    const opened = await openPair({ A: { url: "/preview.wav", offsetS: 10 }, B: { url: "/mix.wav", offsetS: 0 } }, fakeIo(log));
    expect(opened.span).toEqual({ startS: 10, endS: 30 });
    expect(opened.first.B.offsetS).toBeCloseTo(10, 9);
    expect(worstError(opened.first.B.buffer, 10 * SR)).toBeLessThan(1e-6);
    const mix = await opened.rest.B!;
    expect(mix.buffer.duration).toBeCloseTo(20, 6);
    expect(worstError(mix.buffer, 10 * SR)).toBeLessThan(1e-6);
    await opened.rest.A;
    const mixBytes = log.filter((r) => r.url === "/mix.wav").reduce((s, r) => s + r.bytes, 0);
    // 20 of the mix's 40 s (and its header probe), not the whole file.
    expect(mixBytes).toBeLessThan(20 * SR * 6 + 2 * HEADER_PROBE_BYTES);
  });

  it("loads a short file in one go, and copes with a server that ignores Range", async () => {
    const log: Served = [];
    const opened = await openPair({ A: { url: "/short.wav", offsetS: 0 }, B: { url: "/print.wav", offsetS: 0 } }, fakeIo(log, false));
    expect(opened.span).toEqual({ startS: 0, endS: 5 });
    expect(opened.first.A.complete).toBe(true);
    expect(opened.first.B.complete).toBe(true);
    expect(opened.rest).toEqual({ A: null, B: null });
    expect(worstError(opened.first.B.buffer, 0)).toBeLessThan(1e-6);
    // Each file was sent once, whole.
    expect(log.map((r) => r.range)).toEqual([null, null]);
  });

  it("refuses two sources that do not overlap, and a missing file", async () => {
    await expect(openPair({ A: { url: "/short.wav", offsetS: 100 }, B: { url: "/print.wav", offsetS: 0 } }, fakeIo([]))).rejects.toThrow(/do not overlap/);
    await expect(openPair({ A: { url: "/nothing.wav", offsetS: 0 }, B: { url: "/print.wav", offsetS: 0 } }, fakeIo([]))).rejects.toThrow(/404/);
  });
});
