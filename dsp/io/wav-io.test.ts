// WAV reader/writer: round trips for every format, cross-checked with the
// independent `wavefile` package, and each bad input's specific error
// (bad files crafted by hand below, following the RIFF/WAVE layout).
import { mkdtempSync, rmSync, writeFileSync, readFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { WaveFile } from "wavefile";
import { afterAll, describe, expect, it } from "vitest";
import { createRng } from "../../bench/signals.ts";
import { openWav, probeWav, WavFormatError, type WavFormatErrorCode } from "./wav-reader.ts";
import { createWavWriter, type WavWriterOptions } from "./wav-writer.ts";

const dir = mkdtempSync(join(tmpdir(), "tidemark-wav-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
let fileNo = 0;
const tmp = (name: string) => join(dir, `${fileNo++}-${name}`);

function randomPlanar(channels: number, frames: number, seed: number): Float64Array[] {
  const rng = createRng(seed);
  return Array.from({ length: channels }, () => Float64Array.from({ length: frames }, () => 1.9 * rng() - 0.95));
}

async function readAll(path: string, block = 4096): Promise<Float64Array[]> {
  const r = await openWav(path);
  const out = Array.from({ length: r.format.channels }, () => new Float64Array(r.format.frames));
  const bufs = Array.from({ length: r.format.channels }, () => new Float64Array(block));
  let at = 0;
  for (;;) {
    const n = await r.read(bufs, block);
    if (n === 0) break;
    for (let ch = 0; ch < bufs.length; ch++) out[ch].set(bufs[ch].subarray(0, n), at);
    at += n;
  }
  await r.close();
  expect(at).toBe(r.format.frames);
  return out;
}

const formats: Array<Pick<WavWriterOptions, "bitDepth" | "float">> = [
  { bitDepth: 16, float: false },
  { bitDepth: 24, float: false },
  { bitDepth: 32, float: false },
  { bitDepth: 32, float: true },
];

describe("WAV round trips", () => {
  for (const f of formats) {
    for (const extensible of [false, true]) {
      const name = `${f.float ? "float" : "PCM"} ${f.bitDepth}-bit${extensible ? " extensible" : ""}`;
      it(`${name}: mono and stereo at 44.1, 48, 96 and 192 kHz`, async () => {
        let seed = 1;
        for (const channels of [1, 2]) {
          for (const sampleRate of [44100, 48000, 96000, 192000]) {
            const frames = 1001; // odd: 24-bit mono gives an odd data size and a pad byte
            const input = randomPlanar(channels, frames, seed++);
            const path = tmp("rt.wav");
            const w = await createWavWriter(path, { sampleRate, channels, ...f, extensible });
            await w.write(input.map((x) => x.subarray(0, 500)), 500);
            await w.write(input.map((x) => x.subarray(500)), frames - 500);
            expect(w.framesWritten).toBe(frames);
            await w.close();
            const fmt = await probeWav(path);
            expect(fmt).toEqual({
              sampleRate, channels, bitDepth: f.bitDepth, sampleFormat: f.float ? "float" : "int",
              formatName: name.replace(" extensible", ""), frames, extensible,
            });
            const out = await readAll(path, 137);
            const lsb = f.float ? 0 : 2 ** -(f.bitDepth - 1);
            for (let ch = 0; ch < channels; ch++) {
              for (let i = 0; i < frames; i++) {
                if (f.float) expect(out[ch][i]).toBe(Math.fround(input[ch][i]));
                else expect(Math.abs(out[ch][i] - input[ch][i])).toBeLessThanOrEqual(lsb / 2);
              }
            }
            // Second opinion: the independent wavefile parser reads the same samples
            // (it reads extensible float as integers, so that one case is left out).
            if (f.float && extensible) continue;
            const wf = new WaveFile(readFileSync(path));
            const ref = wf.getSamples(false, Float64Array) as unknown as Float64Array[] | Float64Array;
            const refCh = channels === 1 ? [ref as Float64Array] : (ref as Float64Array[]);
            const scale = f.float ? 1 : 2 ** (f.bitDepth - 1);
            for (let ch = 0; ch < channels; ch++) for (let i = 0; i < frames; i += 97) expect(refCh[ch][i] / scale).toBe(out[ch][i]);
          }
        }
      });
    }
  }

  it("reads files written by wavefile exactly (integers on the grid)", async () => {
    for (const [depth, bits] of [["16", 16], ["24", 24], ["32", 32]] as const) {
      const rng = createRng(bits);
      const max = 2 ** (bits - 1);
      const ints = [0, 1].map(() => Array.from({ length: 300 }, () => Math.floor(rng() * 2 * max) - max));
      ints[0][0] = -max;
      ints[1][0] = max - 1;
      const wf = new WaveFile();
      wf.fromScratch(2, 48000, depth, ints);
      const path = tmp("wf.wav");
      writeFileSync(path, wf.toBuffer());
      const out = await readAll(path, 64);
      for (let ch = 0; ch < 2; ch++) for (let i = 0; i < 300; i++) expect(out[ch][i]).toBe(ints[ch][i] / max);
    }
  });

  it("ints are rounded and clipped, not wrapped", async () => {
    const path = tmp("clip.wav");
    const w = await createWavWriter(path, { sampleRate: 48000, channels: 1, bitDepth: 16, float: false });
    await w.write([Float64Array.from([1.5, -1.5, 1, -1, 0.5 / 32768 + 1e-9, -0.4 / 32768])], 6);
    await w.close();
    const [x] = await readAll(path);
    expect(Array.from(x)).toEqual([32767 / 32768, -1, 32767 / 32768, -1, 1 / 32768, 0]);
  });
});

// ---- hand-crafted files ----
function chunk(id: string, body: Buffer, declaredSize = body.length): Buffer {
  const head = Buffer.alloc(8);
  head.write(id, 0, "latin1");
  head.writeUInt32LE(declaredSize >>> 0, 4);
  return Buffer.concat([head, body, body.length & 1 ? Buffer.alloc(1) : Buffer.alloc(0)]);
}
function fmtBody(tag: number, channels: number, rate: number, bits: number): Buffer {
  const b = Buffer.alloc(16);
  b.writeUInt16LE(tag, 0);
  b.writeUInt16LE(channels, 2);
  b.writeUInt32LE(rate, 4);
  b.writeUInt32LE((rate * channels * bits) / 8, 8);
  b.writeUInt16LE((channels * bits) / 8, 12);
  b.writeUInt16LE(bits, 14);
  return b;
}
function extensibleFmtBody(subTag: number, channels: number, rate: number, bits: number): Buffer {
  const ext = Buffer.alloc(24);
  ext.writeUInt16LE(22, 0);
  ext.writeUInt16LE(bits, 2);
  ext.writeUInt32LE(3, 4);
  Buffer.from([subTag & 0xff, subTag >> 8, 0, 0, 0, 0, 0x10, 0, 0x80, 0, 0, 0xaa, 0, 0x38, 0x9b, 0x71]).copy(ext, 8);
  return Buffer.concat([fmtBody(0xfffe, channels, rate, bits), ext]);
}
function riff(chunks: Buffer[], form = "WAVE"): Buffer {
  const body = Buffer.concat(chunks);
  const head = Buffer.alloc(12);
  head.write("RIFF", 0, "latin1");
  head.writeUInt32LE(body.length + 4, 4);
  head.write(form, 8, "latin1");
  return Buffer.concat([head, body]);
}
function pcm16(values: number[]): Buffer {
  const b = Buffer.alloc(values.length * 2);
  values.forEach((v, i) => b.writeInt16LE(v, i * 2));
  return b;
}
function float32(values: number[]): Buffer {
  const b = Buffer.alloc(values.length * 4);
  values.forEach((v, i) => b.writeFloatLE(v, i * 4));
  return b;
}
function save(buf: Buffer): string {
  const p = tmp("crafted.wav");
  writeFileSync(p, buf);
  return p;
}

async function expectWavError(path: string, code: WavFormatErrorCode, message: RegExp): Promise<void> {
  const err = await readAll(path).then(() => null, (e: unknown) => e);
  expect(err).toBeInstanceOf(WavFormatError);
  expect((err as WavFormatError).code).toBe(code);
  expect((err as WavFormatError).message).toMatch(message);
}

describe("WAV chunk handling", () => {
  it("skips unknown chunks (LIST, bext, odd-sized with pad byte) and finds fmt after data", async () => {
    const data = pcm16([100, -100, 200, -200, 300, -300]);
    const p = save(riff([
      chunk("LIST", Buffer.from("INFOabc")), // 7 bytes: padded to 8
      chunk("fmt ", fmtBody(1, 2, 44100, 16)),
      chunk("bext", Buffer.alloc(602)),
      chunk("junk", Buffer.from("x")),
      chunk("data", data),
    ]));
    expect((await probeWav(p)).frames).toBe(3);
    const [l, r] = await readAll(p);
    expect(Array.from(l)).toEqual([100, 200, 300].map((v) => v / 32768));
    expect(Array.from(r)).toEqual([-100, -200, -300].map((v) => v / 32768));
    const late = save(riff([chunk("data", data), chunk("fmt ", fmtBody(1, 1, 48000, 16))]));
    expect((await probeWav(late)).frames).toBe(6);
  });

  it("accepts the 0 and 0xFFFFFFFF streaming placeholders as 'to the end of the file'", async () => {
    for (const placeholder of [0, 0xffffffff]) {
      const p = save(riff([chunk("fmt ", fmtBody(1, 1, 48000, 16)), chunk("data", pcm16([1, 2, 3, 4]), placeholder)]));
      expect((await probeWav(p)).frames).toBe(4);
    }
  });
});

describe("WAV bad input gives specific errors", () => {
  it("not-riff", async () => {
    await expectWavError(save(Buffer.from("ID3\u0004 this is not a wave file at all")), "not-riff", /not a WAV/);
    await expectWavError(save(riff([chunk("fmt ", fmtBody(1, 1, 48000, 16))], "AVI ")), "not-riff", /RIFF\/WAVE/);
    await expectWavError(save(Buffer.alloc(0)), "not-riff", /not a WAV/);
  });

  it("truncated", async () => {
    const full = riff([chunk("fmt ", fmtBody(1, 1, 48000, 16)), chunk("data", pcm16([1, 2, 3]))]);
    await expectWavError(save(full.subarray(0, 30)), "truncated", /fmt chunk/);
    await expectWavError(save(riff([chunk("fmt ", fmtBody(1, 1, 48000, 16))])), "truncated", /no data chunk/);
    await expectWavError(save(riff([chunk("data", pcm16([1, 2]))])), "truncated", /no fmt chunk/);
  });

  it("bad-size: the data chunk claims more bytes than the file holds", async () => {
    const p = save(riff([chunk("fmt ", fmtBody(1, 2, 48000, 16)), chunk("data", pcm16([1, 2, 3, 4]), 400000)]));
    await expectWavError(p, "bad-size", /claims 400000 bytes but only 8 follow/);
  });

  it("unsupported-codec names the format", async () => {
    await expectWavError(save(riff([chunk("fmt ", fmtBody(7, 1, 48000, 8)), chunk("data", Buffer.alloc(100))])), "unsupported-codec", /µ-law \(format tag 0x0007\)/);
    await expectWavError(save(riff([chunk("fmt ", fmtBody(2, 1, 48000, 4)), chunk("data", Buffer.alloc(100))])), "unsupported-codec", /Microsoft ADPCM/);
    await expectWavError(save(riff([chunk("fmt ", extensibleFmtBody(0x11, 2, 48000, 4)), chunk("data", Buffer.alloc(100))])), "unsupported-codec", /IMA ADPCM/);
  });

  it("no-frames", async () => {
    await expectWavError(save(riff([chunk("fmt ", fmtBody(1, 2, 48000, 16)), chunk("data", Buffer.alloc(0))])), "no-frames", /no audio frames/);
    await expectWavError(save(riff([chunk("fmt ", fmtBody(1, 2, 48000, 24)), chunk("data", Buffer.alloc(5))])), "no-frames", /no audio frames/);
  });

  it("too-many-channels", async () => {
    await expectWavError(save(riff([chunk("fmt ", fmtBody(1, 6, 48000, 16)), chunk("data", Buffer.alloc(120))])), "too-many-channels", /6 channels: multichannel is not supported yet/);
  });

  it("non-finite floats are rejected at read, naming the frame", async () => {
    for (const bad of [NaN, Infinity, -Infinity]) {
      const p = save(riff([chunk("fmt ", fmtBody(3, 1, 48000, 32)), chunk("data", float32([0.1, 0.2, bad, 0.3]))]));
      expect((await probeWav(p)).frames).toBe(4);
      await expectWavError(p, "non-finite", /at frame 2, channel 1/);
    }
  });

  it("unsupported-format: 8-bit PCM, sample rates outside 44.1–192 kHz, 0 channels", async () => {
    await expectWavError(save(riff([chunk("fmt ", fmtBody(1, 1, 48000, 8)), chunk("data", Buffer.alloc(10))])), "unsupported-format", /PCM 8-bit/);
    await expectWavError(save(riff([chunk("fmt ", fmtBody(1, 1, 22050, 16)), chunk("data", Buffer.alloc(10))])), "unsupported-format", /22050 Hz/);
    await expectWavError(save(riff([chunk("fmt ", fmtBody(1, 1, 384000, 16)), chunk("data", Buffer.alloc(10))])), "unsupported-format", /384000 Hz/);
    await expectWavError(save(riff([chunk("fmt ", fmtBody(1, 0, 48000, 16)), chunk("data", Buffer.alloc(10))])), "unsupported-format", /0 channels/);
  });
});

describe("WAV header bounds", () => {
  it("header-too-long: a million empty chunks before the audio are refused from one buffered read, within 100 ms", async () => {
    // 10⁶ empty "pad " chunks (8 bytes each), then fmt and data: 8 MB of header.
    const pads = Buffer.alloc(1_000_000 * 8);
    for (let i = 0; i < 1_000_000; i++) pads.write("pad ", i * 8, "latin1");
    const p = save(riff([pads, chunk("fmt ", fmtBody(1, 1, 48000, 16)), chunk("data", pcm16([1, 2, 3]))]));
    const started = performance.now();
    await expectWavError(p, "header-too-long", /more than 512 chunks/);
    expect(performance.now() - started).toBeLessThan(100);
  });

  it("reads a file whose fmt follows a large data chunk, and skips a large chunk before fmt", async () => {
    const big = pcm16(Array.from({ length: 1_500_000 }, (_, i) => i % 1000));
    const late = save(riff([chunk("data", big), chunk("fmt ", fmtBody(1, 1, 48000, 16))]));
    expect((await probeWav(late)).frames).toBe(1_500_000);
    const art = save(riff([chunk("JUNK", Buffer.alloc(2_500_000)), chunk("fmt ", fmtBody(1, 1, 48000, 16)), chunk("data", pcm16([1, 2]))]));
    expect((await probeWav(art)).frames).toBe(2);
    // Chunks spread over more windows than the bound are refused.
    const spread = save(riff([0, 1, 2, 3, 4].map(() => chunk("JUNK", Buffer.alloc(1_200_000))).concat([chunk("fmt ", fmtBody(1, 1, 48000, 16)), chunk("data", pcm16([1, 2]))])));
    await expectWavError(spread, "header-too-long", /spread too far/);
  });
});
