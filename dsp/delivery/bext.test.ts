// The bext chunk against EBU Tech 3285 v2's layout (offsets stated in
// bext.ts), read back by our parser and by a second one (wavefile 11's).
import { mkdtempSync, readFileSync, rmSync, statSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { spawnSync } from "node:child_process";
import { afterAll, describe, expect, it } from "vitest";
import { WaveFile } from "wavefile";
import { BEXT_FIXED_BYTES, buildBextChunk, buildBextPayload, emptyBext, encodeLoudness, parseBextPayload } from "./bext.ts";
import type { Bext } from "./bext.ts";
import { readBextFromWav, writeBextIntoWav } from "./bext-wav.ts";
import { openWav } from "../io/wav-reader.ts";
import { createWavWriter } from "../io/wav-writer.ts";

const dir = mkdtempSync(join(tmpdir(), "tidemark-bext-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function sampleBext(): Bext {
  const umid = new Uint8Array(64);
  for (let i = 0; i < 64; i++) umid[i] = (i * 37 + 11) & 0xff;
  return {
    description: "Harbour Lights (master, 24-bit 48 kHz)",
    originator: "Tidemark",
    originatorReference: "TDM-REL-0007-TRK-03",
    originationDate: "2026-12-01",
    originationTime: "23:45:07",
    timeReferenceFrames: 2 ** 32 * 3 + 123_456_789, // exercises both halves
    umid,
    loudness: { integratedLufs: -14.237, loudnessRangeLu: 6.4, maxTruePeakDbtp: -1.004, maxMomentaryLufs: -9.995, maxShortTermLufs: -11.5 },
    codingHistory: ["A=PCM,F=96000,W=24,M=stereo,T=Tidemark intake", "A=PCM,F=48000,W=24,M=stereo,T=Tidemark print"],
    isrc: "zz-tdm-26-00001",
  };
}

describe("bext payload", () => {
  it("has the Tech 3285 v2 layout: 602 fixed bytes, version 2 at 346, loudness int16 at 412...421, zero reserved", () => {
    const bext = sampleBext();
    const payload = buildBextPayload(bext);
    const view = new DataView(payload.buffer);
    const history = "A=PCM,F=96000,W=24,M=stereo,T=Tidemark intake\r\nA=PCM,F=48000,W=24,M=stereo,T=Tidemark print\r\nISRC:ZZTDM2600001\r\n";
    expect(payload.length).toBe(BEXT_FIXED_BYTES + history.length);
    expect(new TextDecoder().decode(payload.subarray(0, bext.description.length))).toBe(bext.description);
    expect(payload[bext.description.length]).toBe(0);
    expect(new TextDecoder().decode(payload.subarray(320, 330))).toBe("2026-12-01");
    expect(new TextDecoder().decode(payload.subarray(330, 338))).toBe("23:45:07");
    expect(view.getUint32(338, true)).toBe(123_456_789);
    expect(view.getUint32(342, true)).toBe(3);
    expect(view.getUint16(346, true)).toBe(2);
    expect(payload.subarray(348, 412)).toEqual(bext.umid);
    // round(value x 100): -14.237 -> -1424, 6.4 -> 640, -1.004 -> -100, -9.995 -> -999 or -1000 (binary), -11.5 -> -1150
    expect([0, 1, 2, 4].map((i) => view.getInt16(412 + 2 * i, true))).toEqual([-1424, 640, -100, -1150]);
    expect(view.getInt16(418, true)).toBe(Math.round(-9.995 * 100));
    expect(payload.subarray(422, 602).every((b) => b === 0)).toBe(true);
    expect(new TextDecoder().decode(payload.subarray(602))).toBe(history);
  });

  it("round-trips every field; the loudness fields come back as round(value x 100) / 100", () => {
    const bext = sampleBext();
    const parsed = parseBextPayload(buildBextPayload(bext));
    expect(parsed.version).toBe(2);
    expect(parsed).toEqual({
      ...bext,
      version: 2,
      isrc: "ZZTDM2600001",
      loudness: { integratedLufs: -14.24, loudnessRangeLu: 6.4, maxTruePeakDbtp: -1, maxMomentaryLufs: Math.round(-999.5) / 100, maxShortTermLufs: -11.5 },
    });
    for (const [field, value] of Object.entries(bext.loudness)) {
      expect(parsed.loudness[field as keyof Bext["loudness"]]).toBe(Math.round((value as number) * 100) / 100);
    }
  });

  it("writes 0x7FFF for a loudness field that is not set and reads it back as null", () => {
    const bext = { ...sampleBext(), loudness: { ...sampleBext().loudness, loudnessRangeLu: null, maxMomentaryLufs: null } };
    const payload = buildBextPayload(bext);
    expect(new DataView(payload.buffer).getInt16(414, true)).toBe(0x7fff);
    const parsed = parseBextPayload(payload);
    expect(parsed.loudness.loudnessRangeLu).toBeNull();
    expect(parsed.loudness.maxMomentaryLufs).toBeNull();
    expect(parsed.loudness.integratedLufs).toBe(-14.24);
  });

  it("reads no loudness from a version 1 chunk (those bytes were reserved)", () => {
    const payload = buildBextPayload(sampleBext());
    new DataView(payload.buffer).setUint16(346, 1, true);
    expect(parseBextPayload(payload).loudness.integratedLufs).toBeNull();
  });

  it("rejects loudness values outside int16 (and 0x7FFF), NaN; writes -Infinity (silence) as -327.68", () => {
    expect(encodeLoudness(327.66, "x")).toBe(32766);
    expect(encodeLoudness(-327.68, "x")).toBe(-32768);
    expect(() => encodeLoudness(327.67, "x")).toThrow(RangeError);
    expect(() => encodeLoudness(-327.69, "x")).toThrow(/outside/);
    expect(() => encodeLoudness(Infinity, "x")).toThrow(/outside/);
    expect(() => encodeLoudness(NaN, "x")).toThrow(/NaN/);
    expect(encodeLoudness(-Infinity, "x")).toBe(-32768);
    const silent = { ...sampleBext(), loudness: { ...sampleBext().loudness, integratedLufs: -Infinity } };
    expect(parseBextPayload(buildBextPayload(silent)).loudness.integratedLufs).toBe(-327.68);
    expect(() => buildBextPayload({ ...sampleBext(), loudness: { ...sampleBext().loudness, maxTruePeakDbtp: 400 } })).toThrow(/maxTruePeakDbtp/);
  });

  it("rejects text that does not fit or is not ASCII, bad dates and times, and a bad ISRC", () => {
    expect(() => buildBextPayload({ ...sampleBext(), originator: "x".repeat(33) })).toThrow(/holds 32/);
    expect(() => buildBextPayload({ ...sampleBext(), description: "caf\u00e9" })).toThrow(/ASCII/);
    expect(() => buildBextPayload({ ...sampleBext(), originationDate: "2026-13-01" })).toThrow(/yyyy-mm-dd/);
    expect(() => buildBextPayload({ ...sampleBext(), originationTime: "24:00:00" })).toThrow(/hh:mm:ss/);
    expect(() => buildBextPayload({ ...sampleBext(), codingHistory: ["A=PCM\r\nB"] })).toThrow(/ASCII/);
    expect(() => buildBextPayload({ ...sampleBext(), isrc: "ZZ-TDM-26-0001" })).toThrow(/CC-XXX-YY-NNNNN/);
    expect(() => buildBextPayload({ ...sampleBext(), timeReferenceFrames: -1 })).toThrow(/non-negative/);
  });

  it("pads an odd-sized chunk to even length, the size field keeping the true size", () => {
    const odd = buildBextChunk({ ...emptyBext(), codingHistory: ["A=PCM"] }); // 602 + 7 bytes
    expect(new DataView(odd.buffer).getUint32(4, true)).toBe(609);
    expect(odd.length).toBe(8 + 610);
  });
});

function smallWav(): { bytes: Uint8Array; left: number[]; right: number[] } {
  const left = Array.from({ length: 999 }, (_, n) => Math.round(8000 * Math.sin(n / 7)));
  const right = Array.from({ length: 999 }, (_, n) => Math.round(-5000 * Math.sin(n / 11)) + 0);
  const wav = new WaveFile();
  wav.fromScratch(2, 48000, "16", [left, right]);
  return { bytes: wav.toBuffer(), left, right };
}

const asInt16 = (u: number) => (u >= 0x8000 ? u - 0x10000 : u);
/** wavefile keeps the NUL padding of text fields. */
const text = (value: unknown) => String(value).replace(/\0+$/, "");

describe("bext in a WAV file", () => {
  it("is inserted before data, read back by us and by wavefile, and the audio is untouched", async () => {
    const path = join(dir, "print.wav");
    const { bytes, left, right } = smallWav();
    writeFileSync(path, bytes);
    const bext = sampleBext();
    await writeBextIntoWav(path, bext);

    const ours = await readBextFromWav(path);
    expect(ours?.isrc).toBe("ZZTDM2600001");
    expect(ours?.loudness.integratedLufs).toBe(-14.24);
    expect(ours?.timeReferenceFrames).toBe(bext.timeReferenceFrames);

    const file = readFileSync(path);
    expect(file.readUInt32LE(4)).toBe(statSync(path).size - 8);
    const bextAt = file.indexOf("bext", 12, "latin1");
    const dataAt = file.indexOf("data", 12, "latin1");
    expect(bextAt).toBeGreaterThan(0);
    expect(bextAt).toBeLessThan(dataAt);

    const second = new WaveFile(file);
    const theirs = second.bext as Record<string, unknown> & { timeReference: number[] };
    expect(text(theirs.description)).toBe(bext.description);
    expect(text(theirs.originator)).toBe(bext.originator);
    expect(text(theirs.originatorReference)).toBe(bext.originatorReference);
    expect(text(theirs.originationDate)).toBe(bext.originationDate);
    expect(text(theirs.originationTime)).toBe(bext.originationTime);
    expect(theirs.timeReference).toEqual([123_456_789, 3]);
    expect(theirs.version).toBe(2);
    expect(asInt16(theirs.loudnessValue as number)).toBe(-1424);
    expect(asInt16(theirs.loudnessRange as number)).toBe(640);
    expect(asInt16(theirs.maxTruePeakLevel as number)).toBe(-100);
    expect(asInt16(theirs.maxMomentaryLoudness as number)).toBe(Math.round(-9.995 * 100));
    expect(asInt16(theirs.maxShortTermLoudness as number)).toBe(-1150);
    expect(String(theirs.codingHistory)).toContain("ISRC:ZZTDM2600001\r\n");
    const samples = second.getSamples(false) as unknown as Float64Array[];
    expect(Array.from(samples[0])).toEqual(left);
    expect(Array.from(samples[1])).toEqual(right);
  });

  it("replaces an existing bext chunk (here one written by wavefile) instead of adding a second", async () => {
    const path = join(dir, "replace.wav");
    const { bytes } = smallWav();
    const wav = new WaveFile(bytes);
    (wav.bext as Record<string, unknown>).description = "written by the second opinion";
    (wav.bext as Record<string, unknown>).originator = "other";
    writeFileSync(path, wav.toBuffer());
    const before = await readBextFromWav(path);
    expect(before?.description).toBe("written by the second opinion");
    expect(before?.originator).toBe("other");

    await writeBextIntoWav(path, { ...emptyBext(), description: "ours" });
    const file = readFileSync(path);
    expect(file.toString("latin1").split("bext").length - 1).toBe(1);
    expect((await readBextFromWav(path))?.description).toBe("ours");
    expect(new WaveFile(file).getSamples(false)).toEqual(new WaveFile(bytes).getSamples(false));
  });

  it("returns null when there is no bext chunk and leaves the file alone when the bext is invalid", async () => {
    const path = join(dir, "plain.wav");
    writeFileSync(path, smallWav().bytes);
    expect(await readBextFromWav(path)).toBeNull();
    await expect(writeBextIntoWav(path, { ...emptyBext(), originationDate: "01/12/2026" })).rejects.toThrow(/yyyy-mm-dd/);
    expect(readFileSync(path)).toEqual(Buffer.from(smallWav().bytes));
  });

  const hasFfprobe = spawnSync("ffprobe", ["-version"]).status === 0;
  it.skipIf(!hasFfprobe)("is read the same by ffprobe (a third reader)", async () => {
    const path = join(dir, "ffprobe.wav");
    writeFileSync(path, smallWav().bytes);
    const bext = sampleBext();
    await writeBextIntoWav(path, bext);
    const probe = spawnSync("ffprobe", ["-v", "error", "-print_format", "json", "-show_format", path], { encoding: "utf8" });
    const tags = JSON.parse(probe.stdout).format.tags as Record<string, string>;
    expect(tags.comment).toBe(bext.description);
    expect(tags.encoded_by).toBe(bext.originator);
    expect(tags.originator_reference).toBe(bext.originatorReference);
    expect(tags.date).toBe(bext.originationDate);
    expect(tags.creation_time).toBe(bext.originationTime);
    expect(tags.time_reference).toBe(String(bext.timeReferenceFrames));
    expect(tags.coding_history).toContain("ISRC:ZZTDM2600001");
  });

  for (const [bitDepth, float] of [[24, false], [32, true], [16, false]] as const) {
    it(`works on a file from our writer (${float ? "float" : "PCM"} ${bitDepth}-bit, odd frame count): our reader gets the same samples`, async () => {
      const path = join(dir, `ours-${bitDepth}.wav`);
      const frames = 1001;
      const left = new Float64Array(frames).map((_, n) => Math.round(0.4 * Math.sin(n / 5) * 2 ** 15) / 2 ** 15);
      const right = new Float64Array(frames).map((_, n) => Math.round(-0.3 * Math.cos(n / 9) * 2 ** 15) / 2 ** 15);
      const writer = await createWavWriter(path, { sampleRate: 44100, channels: bitDepth === 16 ? 1 : 2, bitDepth, float });
      await writer.write([left, right], frames);
      await writer.close();
      await writeBextIntoWav(path, sampleBext());
      expect((await readBextFromWav(path))?.description).toBe(sampleBext().description);
      expect(readFileSync(path).readUInt32LE(4)).toBe(statSync(path).size - 8);
      const reader = await openWav(path);
      expect(reader.format.frames).toBe(frames);
      const got = [new Float64Array(frames), new Float64Array(frames)];
      expect(await reader.read(got, frames)).toBe(frames);
      await reader.close();
      expect(got[0]).toEqual(left);
      if (bitDepth !== 16) expect(got[1]).toEqual(right);
    });
  }

  it("updates the riff size held in ds64 for an RF64 file", async () => {
    const path = join(dir, "big.wav");
    const fmt = Buffer.alloc(24);
    fmt.write("fmt ", 0, "latin1");
    fmt.writeUInt32LE(16, 4);
    fmt.writeUInt16LE(1, 8); fmt.writeUInt16LE(1, 10); fmt.writeUInt32LE(48000, 12);
    fmt.writeUInt32LE(96000, 16); fmt.writeUInt16LE(2, 20); fmt.writeUInt16LE(16, 22);
    const audio = Buffer.alloc(202);
    for (let i = 0; i < 101; i++) audio.writeInt16LE(i * 100 - 5000, 2 * i);
    const ds64 = Buffer.alloc(36);
    ds64.write("ds64", 0, "latin1");
    ds64.writeUInt32LE(28, 4);
    ds64.writeBigUInt64LE(BigInt(4 + 36 + 24 + 8 + 202), 8); // riff size
    ds64.writeBigUInt64LE(202n, 16); // data size
    ds64.writeBigUInt64LE(101n, 24); // sample count
    const header = Buffer.alloc(12);
    header.write("RF64", 0, "latin1"); header.writeUInt32LE(0xffffffff, 4); header.write("WAVE", 8, "latin1");
    const dataHeader = Buffer.alloc(8);
    dataHeader.write("data", 0, "latin1"); dataHeader.writeUInt32LE(0xffffffff, 4);
    writeFileSync(path, Buffer.concat([header, ds64, fmt, dataHeader, audio]));
    await writeBextIntoWav(path, sampleBext());
    const file = readFileSync(path);
    expect(file.toString("latin1", 0, 4)).toBe("RF64");
    expect(file.readUInt32LE(4)).toBe(0xffffffff);
    expect(Number(file.readBigUInt64LE(12 + 8))).toBe(file.length - 8);
    expect(Number(file.readBigUInt64LE(12 + 16))).toBe(202);
    expect(file.subarray(file.length - 202)).toEqual(audio);
    expect((await readBextFromWav(path))?.isrc).toBe("ZZTDM2600001");
  });

  it("rejects a file that is not a WAV", async () => {
    const path = join(dir, "not.wav");
    writeFileSync(path, Buffer.from("definitely not audio, just text"));
    await expect(readBextFromWav(path)).rejects.toThrow(/not a WAV/);
  });
});
