// Delivery against the real database and local-disk storage: the studio's
// default formats, delivered files (the newest finished one per track and
// format counts), the loudness report, and the release package zip, read back
// with Debian's unzip: exactly the expected names, each a WAV file of its
// format with the stored bytes, plus the report.
import { execFileSync } from "node:child_process";
import { createHash, randomUUID } from "node:crypto";
import { createWriteStream } from "node:fs";
import { mkdtemp, readFile, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { pipeline } from "node:stream/promises";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import { createStorage, type StorageDriver } from "../../app/lib/storage/storage.server.ts";
import { addFormat, completeDelivery, createDelivery, failDelivery, latestDeliveries, loudnessReport, releaseFormats, releasePackage, studioFormats } from "../../app/models/delivery.server.ts";
import { saveStudioSettings } from "../../app/models/studio-settings.server.ts";
import { probeWav } from "../../dsp/io/wav-reader.ts";
import { createWavWriter } from "../../dsp/io/wav-writer.ts";
import { streamReleasePackage } from "../../app/lib/delivery/release-package.server.ts";
import { createFixture, destroyFixture, type Fixture } from "./fixtures.ts";

let fixture: Fixture;
let dir: string;
let store: StorageDriver;
const trackIds: string[] = [];
const renderIds: string[] = [];
const sourceHashes = new Map<string, string>();

const sha256 = (bytes: Buffer) => createHash("sha256").update(bytes).digest("hex");

/** Writes a short stereo sine of our own as a WAV in the format and stores it; returns key, size and hash. */
async function storeWav(sampleRate: number, bitDepth: 16 | 24, freqHz: number) {
  const path = join(dir, `${randomUUID()}.wav`);
  const writer = await createWavWriter(path, { sampleRate, channels: 2, bitDepth, float: false });
  const frames = Math.round(sampleRate * 0.25);
  const left = new Float64Array(frames);
  const right = new Float64Array(frames);
  for (let i = 0; i < frames; i++) left[i] = right[i] = 0.25 * Math.sin((2 * Math.PI * freqHz * i) / sampleRate);
  await writer.write([left, right], frames);
  await writer.close();
  const key = `deliveries/${fixture.tag}/${randomUUID()}.wav`;
  const stored = await store.put(key, { filePath: path });
  const hash = sha256(await readFile(path));
  sourceHashes.set(key, hash);
  return { key, sizeBytes: stored.sizeBytes, hash };
}

async function addPrint(trackId: string) {
  const tag = randomUUID().slice(0, 8);
  const [mix] = await db("mixes")
    .insert({ track_id: trackId, version: 1, original_name: "mix.wav", storage_key: `mixes/${tag}/mix.wav`, size_bytes: 1000, sample_rate_hz: 48000, channels: 2, bit_depth: 24, sample_format: "int", frames: 100 })
    .returning("id");
  const [chain] = await db("chains").insert({ studio_id: fixture.studioId, track_id: trackId, name: `Chain ${tag}` }).returning("id");
  const [rev] = await db("chain_revisions").insert({ chain_id: chain.id, revision: 1, params: JSON.stringify({ stages: [] }) }).returning("id");
  const [render] = await db("renders").insert({ mix_id: mix.id, chain_revision_id: rev.id, kind: "print", state: "done", output_key: `renders/${randomUUID()}.wav` }).returning("id");
  renderIds.push(render.id);
  return render.id as string;
}

async function deliver(trackIndex: number, formatId: string, sampleRate: number, bitDepth: 16 | 24, analysis: { integratedLufs: number; loudnessRangeLu: number; truePeakDbtp: number }) {
  const id = await createDelivery({ trackId: trackIds[trackIndex]!, formatId, sourceRenderId: renderIds[trackIndex]! });
  const file = await storeWav(sampleRate, bitDepth, 440 + 110 * trackIndex);
  const warnings = await completeDelivery(id, { storageKey: file.key, sizeBytes: file.sizeBytes, analysis, file: { sampleRate, bitDepth, sampleFormat: "int" } });
  return { id, ...file, warnings };
}

beforeAll(async () => {
  expect(await db.schema.hasTable("deliveries"), "run `npx tsx scripts/migrate.ts` first").toBe(true);
  fixture = await createFixture();
  dir = await mkdtemp(join(tmpdir(), "tidemark-delivery-"));
  store = createStorage({ STORAGE_DRIVER: "local", STORAGE_DIR: join(dir, "storage") });
  await db("tracks").where({ id: fixture.trackId }).update({ title: 'Low Tide: "Lights"/Intro?' });
  const more = await db("tracks")
    .insert([
      { release_id: fixture.releaseId, position: 2, title: "Harbour, Lights" },
      { release_id: fixture.releaseId, position: 10, title: "Unfinished" },
    ])
    .returning("id");
  trackIds.push(fixture.trackId, more[0].id, more[1].id);
  for (const t of trackIds) await addPrint(t);
  await saveStudioSettings(fixture.studioId, { normalisationReferences: [{ name: "Streaming reference", lufs: -14 }, { name: "Quiet reference", lufs: -16 }] });
});

afterAll(async () => {
  if (fixture) await db("renders").whereIn("id", renderIds).delete();
  await destroyFixture(fixture);
  if (dir) await rm(dir, { recursive: true, force: true });
  await db.destroy();
});

describe("delivery formats", () => {
  it("a studio starts with the two default formats, written once even when asked twice at once", async () => {
    const [a, b] = await Promise.all([studioFormats(fixture.studioId), studioFormats(fixture.studioId)]);
    expect(a.map((f) => f.name)).toEqual(["Streaming master 24-bit 48 kHz", "CD master 16-bit 44.1 kHz"]);
    expect(b.map((f) => f.id)).toEqual(a.map((f) => f.id));
    expect(await db("delivery_formats").where({ studio_id: fixture.studioId })).toHaveLength(2);
    expect(a[1]).toMatchObject({ sampleRate: 44100, bitDepth: 16, dither: "tpdf", ceilingDbtp: -1, releaseId: null });
    expect((await releaseFormats(fixture.releaseId)).map((f) => f.id)).toEqual(a.map((f) => f.id));
  });

  it("a release with formats of its own uses only those; bad formats are refused", async () => {
    const own = await addFormat(fixture.studioId, fixture.otherReleaseId, { name: "Vinyl pre-master", sampleRate: 96000, bitDepth: 24, dither: "none", ceilingDbtp: -3, targetLufs: -16 });
    expect((await releaseFormats(fixture.otherReleaseId)).map((f) => f.id)).toEqual([own.id]);
    expect(own).toMatchObject({ position: 1, targetLufs: -16, bitDepth: 24 });
    await expect(addFormat(fixture.studioId, null, { name: "Odd", sampleRate: 22050 as 44100, bitDepth: 16, dither: "tpdf", ceilingDbtp: -1 })).rejects.toThrow(/sampleRate/);
    await expect(addFormat(fixture.studioId, null, { name: "Hot", sampleRate: 44100, bitDepth: 16, dither: "tpdf", ceilingDbtp: 1 })).rejects.toThrow(/ceilingDbtp/);
  });
});

describe("the release package", () => {
  let expected: Map<string, string>;

  beforeAll(async () => {
    const [streaming, cd] = await studioFormats(fixture.studioId);
    // An older delivery of track 1 (streaming) is replaced by a newer one; a failed one never counts.
    await deliver(0, streaming!.id, 48000, 24, { integratedLufs: -8, loudnessRangeLu: 4, truePeakDbtp: -0.2 });
    const s1 = await deliver(0, streaming!.id, 48000, 24, { integratedLufs: -9.2, loudnessRangeLu: 5.46, truePeakDbtp: -1.0 });
    const failed = await createDelivery({ trackId: trackIds[0]!, formatId: cd!.id, sourceRenderId: renderIds[0]! });
    await failDelivery(failed, "the print could not be read");
    const c1 = await deliver(0, cd!.id, 44100, 16, { integratedLufs: -9.3, loudnessRangeLu: 5.5, truePeakDbtp: -0.8 });
    const s2 = await deliver(1, streaming!.id, 48000, 24, { integratedLufs: -15, loudnessRangeLu: 8, truePeakDbtp: -2.5 });
    const c2 = await deliver(1, cd!.id, 44100, 16, { integratedLufs: -15.1, loudnessRangeLu: 8, truePeakDbtp: -2.4 });
    const s10 = await deliver(2, streaming!.id, 48000, 24, { integratedLufs: -12, loudnessRangeLu: 6, truePeakDbtp: -1.1 });
    expect(c1.warnings).toEqual(["true peak -0.80 dBTP is above the ceiling of -1 dBTP"]);
    expect(s1.warnings).toEqual([]);
    expected = new Map([
      ["Streaming master 24-bit 48 kHz/01 Low Tide_ _Lights__Intro_.wav", s1.hash],
      ["Streaming master 24-bit 48 kHz/02 Harbour, Lights.wav", s2.hash],
      ["Streaming master 24-bit 48 kHz/10 Unfinished.wav", s10.hash],
      ["CD master 16-bit 44.1 kHz/01 Low Tide_ _Lights__Intro_.wav", c1.hash],
      ["CD master 16-bit 44.1 kHz/02 Harbour, Lights.wav", c2.hash],
    ]);
  });

  it("uses the newest finished delivery of each track and format", async () => {
    const latest = await latestDeliveries(fixture.releaseId);
    expect(latest).toHaveLength(5);
    const t1Streaming = latest.find((d) => d.trackId === trackIds[0] && d.analysis.integratedLufs === -9.2);
    expect(t1Streaming).toBeDefined();
    expect(latest.some((d) => d.analysis.integratedLufs === -8)).toBe(false);
  });

  it("holds exactly the expected files, each a WAV of its format with the stored bytes, and the report", async () => {
    const { stream, files } = await releasePackage(fixture.releaseId, { storage: store });
    expect(new Set(files)).toEqual(new Set(expected.keys()));
    const zipPath = join(dir, "release.zip");
    await pipeline(stream, createWriteStream(zipPath));
    const names = execFileSync("unzip", ["-Z1", zipPath], { encoding: "utf8" }).split("\n").filter(Boolean);
    expect(names.sort()).toEqual([...expected.keys(), "loudness-report.csv"].sort());
    // unzip's own CRC and length check of every entry.
    expect(execFileSync("unzip", ["-tq", zipPath], { encoding: "utf8" })).toMatch(/No errors detected/);

    const out = join(dir, "unzipped");
    execFileSync("unzip", ["-q", zipPath, "-d", out]);
    for (const [name, hash] of expected) {
      const path = join(out, name);
      const format = await probeWav(path);
      const cd = name.startsWith("CD");
      expect(format).toMatchObject({ sampleRate: cd ? 44100 : 48000, bitDepth: cd ? 16 : 24, sampleFormat: "int", channels: 2 });
      expect(format.frames).toBe(Math.round((cd ? 44100 : 48000) * 0.25));
      expect(sha256(await readFile(path)), name).toBe(hash);
    }

    const csv = await readFile(join(out, "loudness-report.csv"), "utf8");
    const lines = csv.split("\r\n");
    expect(lines[0]).toBe("Track,Title,ISRC,Format,Integrated (LUFS),Loudness range (LU),True peak (dBTP),Reconstructed peak (dBFS),PLR (dB),Turn-down at Streaming reference -14 LUFS (dB),Turn-down at Quiet reference -16 LUFS (dB),Warnings");
    expect(lines).toContain('1,"Low Tide: ""Lights""/Intro?",,Streaming master 24-bit 48 kHz,-9.2,5.5,-1,,8.2,4.8,6.8,');
    expect(lines).toContain('2,"Harbour, Lights",,CD master 16-bit 44.1 kHz,-15.1,8,-2.4,,12.7,0,0.9,');
    expect(lines).toContain("10,Unfinished,,CD master 16-bit 44.1 kHz,,,,,,,,not delivered");
    expect(lines).toHaveLength(1 + 3 * 2 + 1);
  });

  it("the report as data matches the package's CSV", async () => {
    const report = await loudnessReport(fixture.releaseId);
    expect(report.references.map((r) => r.lufs)).toEqual([-14, -16]);
    const row = report.rows.find((r) => r.position === 10 && r.format.startsWith("Streaming"))!;
    expect(row.plrDb).toBeCloseTo(10.9, 12);
    row.turnDownDb.forEach((v, i) => expect(v).toBeCloseTo([2, 4][i]!, 12));
  });

  it("a file missing from storage ends the stream with an error, not a short zip", async () => {
    const [streaming] = await studioFormats(fixture.studioId);
    const id = await createDelivery({ trackId: trackIds[2]!, formatId: streaming!.id, sourceRenderId: renderIds[2]! });
    await completeDelivery(id, { storageKey: `deliveries/${fixture.tag}/gone.wav`, sizeBytes: 1234, analysis: { integratedLufs: -12, loudnessRangeLu: 6, truePeakDbtp: -1.1 } });
    const { stream } = await releasePackage(fixture.releaseId, { storage: store });
    await expect(pipeline(stream, createWriteStream(join(dir, "broken.zip")))).rejects.toThrow(/nothing is stored/);
  });
});

describe.skipIf(!process.env.S3_ENDPOINT)("the package from S3 storage", () => {
  it("streams objects from the fake S3 server into the zip", async () => {
    const s3 = createStorage({ ...process.env, STORAGE_DRIVER: "s3" });
    const local = await storeWav(44100, 16, 330);
    const key = `deliveries/${fixture.tag}/s3-${randomUUID()}.wav`;
    await s3.put(key, await store.get(local.key));
    try {
      const zipPath = join(dir, "s3.zip");
      await pipeline(streamReleasePackage({ files: [{ path: "CD/01 From S3.wav", storageKey: key, sizeBytes: local.sizeBytes }], reportCsv: "Track\r\n" }, s3), createWriteStream(zipPath));
      const out = join(dir, "s3-unzipped");
      execFileSync("unzip", ["-q", zipPath, "-d", out]);
      expect(execFileSync("unzip", ["-Z1", zipPath], { encoding: "utf8" }).split("\n").filter(Boolean).sort()).toEqual(["CD/01 From S3.wav", "loudness-report.csv"]);
      expect(sha256(await readFile(join(out, "CD/01 From S3.wav")))).toBe(local.hash);
      expect((await probeWav(join(out, "CD/01 From S3.wav"))).sampleRate).toBe(44100);
    } finally {
      await s3.delete(key);
    }
  });
});
