// The delivery and billing pages against the real database: billing settings
// (errors beside fields, values kept, saved values read back), a release's
// delivery formats (the studio's defaults copied in when a format is added),
// "Make deliveries" (one queued delivery and job per track × format, made here
// by makeDelivery instead of a worker), the loudness report page, and the
// release page's invoice and final files for the owner and the client.
process.env.TIDEMARK_QUEUE_NAMESPACE = `pages-${process.pid}`;
import { randomUUID } from "node:crypto";
import { mkdtemp, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import { makeDelivery } from "../../app/lib/delivery/make-delivery.server.ts";
import { storage } from "../../app/lib/storage/storage.server.ts";
import { stopQueue } from "../../app/jobs/queue.server.ts";
import { buildInvoice, sendInvoice } from "../../app/models/invoice.server.ts";
import { completeDelivery, createDelivery, latestDeliveries, releasePackage, studioFormats } from "../../app/models/delivery.server.ts";
import * as delivery from "../../app/routes/release-delivery.tsx";
import * as report from "../../app/routes/loudness-report.tsx";
import * as billingPage from "../../app/routes/settings-billing-page.tsx";
import * as releasePage from "../../app/routes/release.tsx";
import { createWavWriter } from "../../dsp/io/wav-writer.ts";
import { createFixture, dataOf, destroyFixture, requestAs, type Fixture, type Persona } from "./fixtures.ts";

let fixture: Fixture;
let dir: string;
const storedKeys: string[] = [];

const call = (handler: unknown, persona: Persona, path: string, form?: Record<string, string>) =>
  (handler as (a: unknown) => Promise<unknown>)({ request: requestAs(fixture, persona, path, form ? { form } : {}), params: { releaseId: fixture.releaseId }, context: {} });

/** A finished print in shared storage: a 997 Hz stereo sine at peak 0.5 (about −6 LUFS after ITU-R BS.1770-4), 1 s at 48 kHz. */
async function storedPrint(): Promise<string> {
  const path = join(dir, `${randomUUID()}.wav`);
  const frames = 48_000;
  const writer = await createWavWriter(path, { sampleRate: 48000, channels: 2, bitDepth: 32, float: true });
  const tone = Float64Array.from({ length: frames }, (_, i) => 0.5 * Math.sin((2 * Math.PI * 997 * i) / 48000));
  await writer.write([tone, tone], frames);
  await writer.close();
  const key = `renders/${fixture.tag}/${randomUUID()}.wav`;
  await storage().put(key, { filePath: path });
  storedKeys.push(key);
  const [mix] = await db("mixes")
    .insert({ track_id: fixture.trackId, version: 1, original_name: "mix.wav", storage_key: `mixes/${randomUUID()}.wav`, size_bytes: 1000, sample_rate_hz: 48000, channels: 2, bit_depth: 24, sample_format: "int", frames })
    .returning("id");
  const [chain] = await db("chains").insert({ studio_id: fixture.studioId, track_id: fixture.trackId, name: "Pages chain" }).returning("id");
  const [rev] = await db("chain_revisions").insert({ chain_id: chain.id, revision: 1, params: JSON.stringify({ stages: [] }) }).returning("id");
  const [render] = await db("renders").insert({ mix_id: mix.id, chain_revision_id: rev.id, kind: "print", state: "done", output_key: key, finished_at: db.fn.now() }).returning("id");
  return render.id as string;
}

beforeAll(async () => {
  fixture = await createFixture();
  dir = await mkdtemp(join(tmpdir(), "tidemark-pages-"));
});
afterAll(async () => {
  if (fixture) {
    await db("deliveries").where({ release_id: fixture.releaseId }).delete();
    await db("invoices").where({ studio_id: fixture.studioId }).delete();
    await db("renders").whereIn("mix_id", db("mixes").where({ track_id: fixture.trackId }).select("id")).delete();
  }
  for (const key of storedKeys) await storage().delete(key).catch(() => {});
  await stopQueue();
  await destroyFixture(fixture);
  await rm(dir, { recursive: true, force: true });
});

describe("billing settings page", () => {
  it("keeps what was typed and puts each error beside its field", async () => {
    const { status, body } = dataOf<{ errors: Record<string, string>; values: Record<string, string> }>(
      await call(billingPage.action, "owner", "/settings/billing", { currency: "EURO", trackRate: "2,50", revisionRate: "40", references: "Loud: 3" }),
    );
    expect(status).toBe(400);
    expect(body.errors.currency).toMatch(/three-letter/);
    expect(body.errors.trackRate).toMatch(/250\.50/);
    expect(body.errors.revisionRate).toBeUndefined();
    expect(body.errors.references).toMatch(/Line 1/);
    expect(body.values.trackRate).toBe("2,50");
  });

  it("saves and reads back the rates and reference levels", async () => {
    const saved = (await call(billingPage.action, "owner", "/settings/billing", { currency: "eur", trackRate: "250", revisionRate: "40.5", references: "Stream: -14\nBroadcast: -23" })) as Response;
    expect(saved.status).toBe(302);
    expect(saved.headers.get("Location")).toBe("/settings/billing?saved=1");
    const page = (await call(billingPage.loader, "owner", "/settings/billing?saved=1")) as { saved: boolean; values: Record<string, string> };
    expect(page).toEqual({ saved: true, values: { currency: "EUR", trackRate: "250.00", revisionRate: "40.50", references: "Stream: -14\nBroadcast: -23" } });
  });
});

describe("delivery page", () => {
  it("refuses a format that cannot be printed, with the error beside the field", async () => {
    const { status, body } = dataOf<{ errors: Record<string, string> }>(
      await call(delivery.action, "engineer", "/delivery", { intent: "add-format", name: "Hot", sampleRate: "22050", bitDepth: "24", dither: "tpdf", ceilingDbtp: "2", targetLufs: "x" }),
    );
    expect(status).toBe(400);
    expect(body.errors.sampleRate).toBeDefined();
    expect(body.errors.ceilingDbtp).toMatch(/-20 to 0 dBTP/);
    expect(body.errors.targetLufs).toMatch(/LUFS/);
    expect(await db("delivery_formats").where({ release_id: fixture.releaseId })).toHaveLength(0);
  });

  it("copies the studio's defaults into the release when a format is added", async () => {
    const before = (await call(delivery.loader, "engineer", "/delivery")) as { formats: { name: string }[]; ownFormats: boolean };
    expect(before.ownFormats).toBe(false);
    const { status } = dataOf(await call(delivery.action, "engineer", "/delivery", { intent: "add-format", name: "Loud web", sampleRate: "44100", bitDepth: "16", dither: "tpdf", ceilingDbtp: "-1.5", targetLufs: "-9" }));
    expect(status).toBe(200);
    const after = (await call(delivery.loader, "engineer", "/delivery")) as { formats: { name: string; ceilingDbtp: number; targetLufs?: number }[]; ownFormats: boolean };
    expect(after.ownFormats).toBe(true);
    expect(after.formats.map((f) => f.name)).toEqual([...before.formats.map((f) => f.name), "Loud web"]);
    expect(after.formats.at(-1)).toMatchObject({ ceilingDbtp: -1.5, targetLufs: -9 });
  });

  it("edits a format of the release, and refuses one of another release", async () => {
    const page = (await call(delivery.loader, "engineer", "/delivery")) as { formats: { id: string; name: string }[] };
    const first = page.formats[0]!;
    const edit = { intent: "add-format", formatId: first.id, name: `${first.name} (edited)`, sampleRate: "96000", bitDepth: "24", dither: "none", ceilingDbtp: "-2", targetLufs: "" };
    const saved = (await call(delivery.action, "engineer", "/delivery", edit)) as Response;
    expect(saved.headers.get("Location")).toBe(`/releases/${fixture.releaseId}/delivery`);
    const row = await db("delivery_formats").where({ id: first.id }).first();
    expect(row).toMatchObject({ name: `${first.name} (edited)`, sample_rate_hz: 96000, dither: "none", ceiling_dbtp: -2, target_lufs: null });
    const editing = (await call(delivery.loader, "engineer", `/delivery?edit=${first.id}`)) as { editing: { id: string } | null };
    expect(editing.editing?.id).toBe(first.id);

    const [foreign] = await db("delivery_formats").insert({ studio_id: fixture.studioId, release_id: fixture.otherReleaseId, name: "Elsewhere", sample_rate_hz: 48000, bit_depth: "24", dither: "tpdf", ceiling_dbtp: -1, position: 1 }).returning("id");
    const refused = dataOf<{ errors: Record<string, string> }>(await call(delivery.action, "engineer", "/delivery", { ...edit, formatId: foreign.id, name: "Taken over" }));
    expect(refused.status).toBe(400);
    expect(refused.body.errors.form).toMatch(/not one of this release/);
    expect((await db("delivery_formats").where({ id: foreign.id }).first()).name).toBe("Elsewhere");
  });

  type Page = { tracks: { id: string; review: string; delivered: boolean; reason: string | null }[] };

  it("queues one delivery per approved track and format; made, they show with warnings and in the report", async () => {
    const empty = dataOf<{ queued: number; leftOut: number }>(await call(delivery.action, "engineer", "/delivery", { intent: "make" }));
    expect(empty.body).toMatchObject({ queued: 0, leftOut: 1 });

    // A print sent for review but not approved yet is not delivered, and the page says why.
    const printId = await storedPrint();
    await db("review_requests").insert({ track_id: fixture.trackId, render_id: printId, sent_by: fixture.users.engineer.id, created_at: new Date(Date.now() + 1_000) });
    expect(dataOf<{ queued: number; leftOut: number }>(await call(delivery.action, "engineer", "/delivery", { intent: "make" })).body).toMatchObject({ queued: 0, leftOut: 1 });
    const waiting = (await call(delivery.loader, "engineer", "/delivery")) as Page;
    expect(waiting.tracks).toEqual([{ id: fixture.trackId, position: 1, title: expect.any(String), review: "Sent for review", delivered: false, reason: expect.stringMatching(/not given a verdict/) }]);

    await db("review_events").insert({ track_id: fixture.trackId, render_id: printId, kind: "approve", user_id: fixture.users.client.id, created_at: new Date(Date.now() + 2_000) });
    expect(((await call(delivery.loader, "engineer", "/delivery")) as Page).tracks[0]).toMatchObject({ review: "Approved", delivered: true, reason: null });
    const made = dataOf<{ queued: number; leftOut: number }>(await call(delivery.action, "engineer", "/delivery", { intent: "make" }));
    const formats = await db("delivery_formats").where({ release_id: fixture.releaseId });
    expect(made.body).toMatchObject({ queued: formats.length, leftOut: 0 });
    const rows = await db("deliveries").where({ release_id: fixture.releaseId }).select("id", "state");
    expect(rows.map((r) => r.state)).toEqual(formats.map(() => "queued"));
    // Each queued delivery has its job in the deliver queue.
    const jobs = await db.raw(`SELECT data->>'deliveryId' AS id FROM pgboss.job WHERE name = ?`, [`deliver-pages-${process.pid}`]);
    expect(new Set(jobs.rows.map((j: { id: string }) => j.id))).toEqual(new Set(rows.map((r) => r.id)));

    for (const r of rows) await makeDelivery(r.id);
    const page = (await call(delivery.loader, "engineer", "/delivery")) as { deliveries: { formatName: string; state: string; warnings: string[] }[] };
    expect(page.deliveries.every((d) => d.state === "done")).toBe(true);
    // The sine (about −6 LUFS, peak −6 dBFS) is turned down to the −9 LUFS target, well under its −1.5 dBTP ceiling: nothing to warn of.
    const loud = page.deliveries.find((d) => d.formatName === "Loud web")!;
    expect(loud.warnings).toEqual([]);

    const data = (await call(report.loader, "client", "/loudness-report")) as { report: { references: { name: string }[]; rows: { format: string; integratedLufs: number; turnDownDb: number[] }[] } };
    expect(data.report.references.map((r) => r.name)).toEqual(["Stream", "Broadcast"]);
    const row = data.report.rows.find((r) => r.format === "Loud web")!;
    expect(row.integratedLufs).toBeCloseTo(-9, 0);
    // Turn-down = integrated − reference where louder (−9 − −14 = 5 dB, −9 − −23 = 14 dB).
    expect(row.turnDownDb[0]).toBeCloseTo(row.integratedLufs + 14, 6);
    expect(row.turnDownDb[1]).toBeCloseTo(row.integratedLufs + 23, 6);
  });

  it("deletes a format after confirmation; its finished file stays listed but leaves the package", async () => {
    type Listing = { formats: { id: string; name: string }[]; deleting: { id: string; name: string; finishedFiles: number } | null; deliveries: { formatName: string; formatKept: boolean }[] };
    const before = (await call(delivery.loader, "engineer", "/delivery")) as Listing;
    const loud = before.formats.find((f) => f.name === "Loud web")!;
    const asking = (await call(delivery.loader, "engineer", `/delivery?delete=${loud.id}`)) as Listing;
    expect(asking.deleting).toEqual({ id: loud.id, name: "Loud web", finishedFiles: 1 });
    // Without the confirmation nothing happens.
    const unconfirmed = dataOf<{ errors: Record<string, string> }>(await call(delivery.action, "engineer", "/delivery", { intent: "delete-format", formatId: loud.id }));
    expect(unconfirmed.status).toBe(400);
    expect(await db("delivery_formats").where({ id: loud.id }).first()).toBeDefined();
    // A format of another release is refused.
    const [foreign] = await db("delivery_formats").where({ release_id: fixture.otherReleaseId }).select("id");
    expect(dataOf(await call(delivery.action, "engineer", "/delivery", { intent: "delete-format", formatId: foreign.id, confirm: "yes" })).status).toBe(400);

    const { stream: first, files: packagedBefore } = await releasePackage(fixture.releaseId);
    first.destroy();
    expect(packagedBefore.some((f) => f.startsWith("Loud web/"))).toBe(true);
    const deleted = (await call(delivery.action, "engineer", "/delivery", { intent: "delete-format", formatId: loud.id, confirm: "yes" })) as Response;
    expect(deleted.headers.get("Location")).toBe(`/releases/${fixture.releaseId}/delivery`);
    const after = (await call(delivery.loader, "engineer", "/delivery")) as Listing;
    expect(after.formats.map((f) => f.name)).toEqual(before.formats.filter((f) => f.id !== loud.id).map((f) => f.name));
    expect(after.deliveries.find((d) => d.formatName === "Loud web")).toMatchObject({ formatKept: false });
    const { stream, files } = await releasePackage(fixture.releaseId);
    stream.destroy();
    expect(files.some((f) => f.startsWith("Loud web/"))).toBe(false);
    expect(files.length).toBe(packagedBefore.length - 1);
    const row = await db("deliveries").where({ release_id: fixture.releaseId }).whereRaw(`format->>'name' = 'Loud web'`).first();
    expect(row).toMatchObject({ state: "done", format_id: null });
    expect(await storage().exists(row.storage_key)).toBe(true);

    // The last format cannot go: the release would fall back to the studio's defaults unasked.
    for (const f of after.formats.slice(1)) await call(delivery.action, "engineer", "/delivery", { intent: "delete-format", formatId: f.id, confirm: "yes" });
    const last = dataOf<{ errors: Record<string, string> }>(await call(delivery.action, "engineer", "/delivery", { intent: "delete-format", formatId: after.formats[0]!.id, confirm: "yes" }));
    expect(last.status).toBe(400);
    expect(last.body.errors.form).toMatch(/at least one format/);
  });
});

describe("delivery formats and files already made", () => {
  it("keeps the files when the defaults are copied in; a changed setting takes its file out of the format", async () => {
    const [rel] = await db("releases").insert({ studio_id: fixture.studioId, client_id: fixture.clientId, title: `Copy ${fixture.tag}`, kind: "single" }).returning("id");
    const [track] = await db("tracks").insert({ release_id: rel.id, position: 1, title: "Copied" }).returning("id");
    const [mix] = await db("mixes").insert({ track_id: track.id, version: 1, original_name: "m.wav", storage_key: `mixes/${randomUUID()}.wav`, size_bytes: 1000, sample_rate_hz: 48000, channels: 2, bit_depth: 24, sample_format: "int", frames: 10 }).returning("id");
    const [chain] = await db("chains").insert({ studio_id: fixture.studioId, track_id: track.id, name: "Copy chain" }).returning("id");
    const [rev] = await db("chain_revisions").insert({ chain_id: chain.id, revision: 1, params: JSON.stringify({ stages: [] }) }).returning("id");
    const [print] = await db("renders").insert({ mix_id: mix.id, chain_revision_id: rev.id, kind: "print", state: "done", output_key: `renders/${randomUUID()}.wav`, finished_at: db.fn.now() }).returning("id");
    const defaults = await studioFormats(fixture.studioId);
    for (const [i, f] of defaults.entries()) {
      const id = await createDelivery({ trackId: track.id, formatId: f.id, sourceRenderId: print.id });
      await completeDelivery(id, { storageKey: `deliveries/${rel.id}/${i}.wav`, sizeBytes: 100, analysis: { integratedLufs: -14, loudnessRangeLu: 3, truePeakDbtp: -1.2 } });
    }
    const act = (form: Record<string, string>) => delivery.action({ request: requestAs(fixture, "engineer", `/releases/${rel.id}/delivery`, { form }), params: { releaseId: rel.id }, context: {} } as never);
    const first = defaults[0]!;
    const same = { intent: "add-format", formatId: first.id, sampleRate: String(first.sampleRate), bitDepth: String(first.bitDepth), dither: first.dither, ceilingDbtp: String(first.ceilingDbtp), targetLufs: first.targetLufs === undefined ? "" : String(first.targetLufs) };
    // A new name only: the defaults are copied in, and both files now belong to the copies.
    await act({ ...same, name: "Renamed" });
    const own = await db("delivery_formats").where({ release_id: rel.id }).orderBy("position");
    expect(own.map((f) => f.name)).toEqual(["Renamed", ...defaults.slice(1).map((f) => f.name)]);
    expect(new Set((await latestDeliveries(rel.id)).map((d) => d.formatId))).toEqual(new Set(own.map((f) => f.id)));
    // A new ceiling: the file made to the old one leaves the format.
    await act({ ...same, formatId: own[0].id, name: "Renamed", ceilingDbtp: "-2" });
    expect((await latestDeliveries(rel.id)).map((d) => d.formatId)).toEqual(own.slice(1).map((f) => f.id));
    await db("renders").where({ id: print.id }).delete();
    await db("releases").where({ id: rel.id }).delete();
  });
});

describe("release page: invoice and finals", () => {
  type Billing = { invoice?: { state: string; totalCents: number; lines: unknown[] }; finalsOpen: boolean; hasDeliveries: boolean };
  const billingAs = async (persona: Persona, search = "") => ((await call(releasePage.loader, persona, `/releases/${fixture.releaseId}${search}`)) as { billing: Billing }).billing;

  it("hides a draft from the client, shows it sent, and opens the finals once paid", async () => {
    const invoice = await buildInvoice(fixture.releaseId);
    expect((await billingAs("owner")).invoice).toMatchObject({ state: "draft", totalCents: invoice.totalCents });
    expect((await billingAs("client")).invoice).toBeUndefined();
    await sendInvoice(invoice.id, { appUrl: "http://tidemark.test" });
    const sent = await billingAs("client");
    expect(sent.invoice?.state).toBe("sent");
    expect(sent).toMatchObject({ finalsOpen: false, hasDeliveries: true });
    expect((await billingAs("engineer")).finalsOpen).toBe(true);
    await db("invoices").where({ id: invoice.id }).update({ state: "paid", paid_at: db.fn.now() });
    expect((await billingAs("client")).finalsOpen).toBe(true);
  });

  it("says a refused step's sentence chosen from its code, never text from the query string", async () => {
    const said = async (code: string) =>
      ((await call(releasePage.loader, "owner", `/releases/${fixture.releaseId}?${new URLSearchParams({ invoiceError: code })}`)) as { billing: { invoiceError: string | null } }).billing.invoiceError;
    expect(await said("not-payable")).toBe("Only a sent invoice can be paid.");
    expect(await said("Your account is locked: call +1 555 0100")).toBe("That invoice step was refused.");
    expect(await said("constructor")).toBe("That invoice step was refused.");
  });
});
