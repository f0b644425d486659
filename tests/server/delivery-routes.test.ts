// The release package download route: staff download at once; the release's
// client only after the invoice is paid; others get a 404. The body is the
// streamed zip, read back with Debian's unzip.
import { execFileSync } from "node:child_process";
import { randomUUID } from "node:crypto";
import { mkdtemp, rm, writeFile } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import { storage } from "../../app/lib/storage/storage.server.ts";
import { completeDelivery, createDelivery, studioFormats } from "../../app/models/delivery.server.ts";
import { loader } from "../../app/routes/release-package.ts";
import { loader as reportLoader } from "../../app/routes/release-loudness-report.ts";
import { createWavWriter } from "../../dsp/io/wav-writer.ts";
import { createFixture, destroyFixture, outcomeOf, requestAs, type Fixture, type Persona } from "./fixtures.ts";

let fixture: Fixture;
let dir: string;
const keys: string[] = [];
let renderId: string;

beforeAll(async () => {
  fixture = await createFixture();
  dir = await mkdtemp(join(tmpdir(), "tidemark-package-route-"));
  const [mix] = await db("mixes")
    .insert({ track_id: fixture.trackId, version: 1, original_name: "mix.wav", storage_key: `mixes/${fixture.tag}/mix.wav`, size_bytes: 1000, sample_rate_hz: 48000, channels: 2, bit_depth: 24, sample_format: "int", frames: 100 })
    .returning("id");
  const [chain] = await db("chains").insert({ studio_id: fixture.studioId, track_id: fixture.trackId, name: "Chain" }).returning("id");
  const [rev] = await db("chain_revisions").insert({ chain_id: chain.id, revision: 1, params: JSON.stringify({ stages: [] }) }).returning("id");
  const [render] = await db("renders").insert({ mix_id: mix.id, chain_revision_id: rev.id, kind: "print", state: "done", output_key: `renders/${randomUUID()}.wav` }).returning("id");
  renderId = render.id;
  await db("tracks").where({ id: fixture.trackId }).update({ title: "Moonwake" });
});

afterAll(async () => {
  for (const key of keys) await storage().delete(key);
  if (fixture) await db("renders").where({ id: renderId }).delete();
  await destroyFixture(fixture);
  if (dir) await rm(dir, { recursive: true, force: true });
  await db.destroy();
});

const get = (persona: Persona) => loader({ request: requestAs(fixture, persona, `/releases/${fixture.releaseId}/package.zip`), params: { releaseId: fixture.releaseId } });

describe("the package route", () => {
  it("answers 404 to strangers and 'nothing delivered' before any delivery", async () => {
    for (const persona of ["otherClient", "otherStudio"] as const) expect(await outcomeOf(() => get(persona)), persona).toBe("404");
    expect(await outcomeOf(() => get("signedOut"))).toBe("sign-in");
    expect((await get("owner")).status).toBe(404);
  });

  it("streams the zip to staff; the client must pay first", async () => {
    const [streaming] = await studioFormats(fixture.studioId);
    const path = join(dir, "s.wav");
    const writer = await createWavWriter(path, { sampleRate: 48000, channels: 2, bitDepth: 24, float: false });
    const frames = 4800;
    const tone = Float64Array.from({ length: frames }, (_, i) => 0.1 * Math.sin((2 * Math.PI * 500 * i) / 48000));
    await writer.write([tone, tone], frames);
    await writer.close();
    const key = `deliveries/${fixture.tag}/${randomUUID()}.wav`;
    keys.push(key);
    const stored = await storage().put(key, { filePath: path });
    const id = await createDelivery({ trackId: fixture.trackId, formatId: streaming!.id, sourceRenderId: renderId });
    await completeDelivery(id, { storageKey: key, sizeBytes: stored.sizeBytes, analysis: { integratedLufs: -23, loudnessRangeLu: 0, truePeakDbtp: -20 } });

    const client = await get("client");
    expect(client.status).toBe(403);
    expect(await client.text()).toMatch(/once the invoice is paid/);

    const res = await get("engineer");
    expect(res.status).toBe(200);
    expect(res.headers.get("Content-Type")).toBe("application/zip");
    expect(res.headers.get("Content-Disposition")).toContain(`filename="Fixture EP ${fixture.tag}.zip"`);
    const zipPath = join(dir, "route.zip");
    await writeFile(zipPath, Buffer.from(await res.arrayBuffer()));
    expect(execFileSync("unzip", ["-Z1", zipPath], { encoding: "utf8" }).split("\n").filter(Boolean).sort()).toEqual(["Streaming master 24-bit 48 kHz/01 Moonwake.wav", "loudness-report.csv"]);

    // Paid: the client may download.
    await db("invoices").insert({ studio_id: fixture.studioId, release_id: fixture.releaseId, number: `T-${fixture.tag}`, currency: "EUR", state: "paid", total_cents: 100, sent_at: new Date(), paid_at: new Date() });
    const paid = await get("client");
    expect(paid.status).toBe(200);
    expect((await paid.arrayBuffer()).byteLength).toBeGreaterThan(stored.sizeBytes);
  });

  it("serves the loudness report CSV to the release's people only", async () => {
    const report = (persona: Persona) => reportLoader({ request: requestAs(fixture, persona, `/releases/${fixture.releaseId}/loudness-report.csv`), params: { releaseId: fixture.releaseId } });
    expect(await outcomeOf(() => report("otherClient"))).toBe("404");
    const res = await report("client");
    expect(res.headers.get("Content-Type")).toMatch(/^text\/csv/);
    const lines = (await res.text()).split("\r\n");
    // −23 LUFS is below every default reference (−14, −16, −23): no turn-down; PLR = −20 − (−23) = 3 dB.
    expect(lines[1]).toBe("1,Moonwake,,Streaming master 24-bit 48 kHz,-23,0,-20,,3,0,0,0,");
    expect(lines[2]).toBe("1,Moonwake,,CD master 16-bit 44.1 kHz,,,,,,,,,not delivered");
  });
});
