// Billing and finals in Chromium against the production build, a worker and
// the local payments fake: the owner sets the studio's rates, makes the
// release's deliveries (the worker runs each through its format), builds and
// sends the invoice; the client finds the finals locked, pays on the fake
// checkout (the invoice checked and photographed at phone width, 375 px, on
// the way: tests/artifacts/invoice-phone-375.png), comes back to a paid
// invoice and downloads the release's zip.
// The release, its track and a finished print (a synthesized sine), sent for
// review and approved, are written straight to the database and storage in setup.
import { mkdirSync, mkdtempSync, readFileSync, rmSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { randomUUID } from "node:crypto";
import { expect, test } from "@playwright/test";
import knex from "knex";
import knexConfig from "../../knexfile.ts";
import { createWavWriter } from "../../dsp/io/wav-writer.ts";
import { storage } from "../../app/lib/storage/storage.server.ts";
import { signIn } from "./demo-sign-in.ts";

const OWNER = "owner@lanternquay.test";
const CLIENT = "mirelle@quane.test";
const ARTIFACTS = path.resolve("tests/artifacts");
const PAYMENTS = `${process.env.STRIPE_API_PROTOCOL ?? "http"}://${process.env.STRIPE_API_HOST ?? "127.0.0.1"}:${process.env.STRIPE_API_PORT ?? "12121"}`;

let releaseId: string;
let printPage: string;
let tmp: string;
const title = `Harbour lights ${randomUUID().slice(0, 6)}`;

test.beforeAll(async () => {
  tmp = mkdtempSync(path.join(os.tmpdir(), "tidemark-billing-e2e-"));
  // The fake sends its signed events to the app under test.
  const config = await fetch(`${PAYMENTS}/_fake/config`, { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify({ webhookUrl: new URL("/api/payments/webhook", process.env.BASE_URL ?? "http://127.0.0.1:3100").href }) });
  expect(config.ok).toBe(true);
  const db = knex(knexConfig);
  try {
    const studio = await db("studios").where({ name: "Lantern Quay Mastering" }).first("id");
    if (!studio) throw new Error("the demo studio is missing: run the tests on a seeded database");
    const member = await db("memberships as m").join("users as u", "u.id", "m.user_id").where({ "u.email": CLIENT, "m.studio_id": studio.id }).first("m.client_id");
    const [release] = await db("releases").insert({ studio_id: studio.id, client_id: member.client_id, title, kind: "single", status: "mastering" }).returning("id");
    releaseId = release.id;
    const [track] = await db("tracks").insert({ release_id: releaseId, position: 1, title: "Lantern tide" }).returning("id");
    // 2 s of a 440 Hz stereo sine at peak 0.7, as a finished 24-bit print.
    const file = path.join(tmp, "print.wav");
    const frames = 96_000;
    const writer = await createWavWriter(file, { sampleRate: 48_000, channels: 2, bitDepth: 24, float: false });
    const tone = Float64Array.from({ length: frames }, (_, i) => 0.7 * Math.sin((2 * Math.PI * 440 * i) / 48_000));
    await writer.write([tone, tone], frames);
    await writer.close();
    const key = `renders/e2e-billing/${randomUUID()}.wav`;
    await storage().put(key, { filePath: file }, { contentType: "audio/wav" });
    const [mix] = await db("mixes")
      .insert({ track_id: track.id, version: 1, original_name: "lantern-tide.wav", storage_key: `mixes/${randomUUID()}.wav`, size_bytes: 1000, sample_rate_hz: 48000, channels: 2, bit_depth: 24, sample_format: "int", frames, created_at: new Date(Date.now() - 120_000) })
      .returning("id");
    const [chain] = await db("chains").insert({ studio_id: studio.id, track_id: track.id, name: "Billing flow chain" }).returning("id");
    const [rev] = await db("chain_revisions").insert({ chain_id: chain.id, revision: 1, params: JSON.stringify({ stages: [] }) }).returning("id");
    const [print] = await db("renders").insert({ mix_id: mix.id, chain_revision_id: rev.id, kind: "print", state: "done", output_key: key, finished_at: new Date(Date.now() - 60_000) }).returning("id");
    // Only approved tracks are delivered: the print was sent for review and the client approved it.
    const engineer = await db("users").where({ email: "engineer@lanternquay.test" }).first("id");
    const clientUser = await db("users").where({ email: CLIENT }).first("id");
    await db("review_requests").insert({ track_id: track.id, render_id: print.id, sent_by: engineer.id, created_at: new Date(Date.now() - 30_000) });
    await db("review_events").insert({ track_id: track.id, render_id: print.id, kind: "approve", user_id: clientUser.id, created_at: new Date(Date.now() - 10_000) });
    printPage = `/releases/${releaseId}/tracks/${track.id}/renders/${print.id}`;
  } finally {
    await db.destroy();
  }
});

test.afterAll(() => {
  if (tmp) rmSync(tmp, { recursive: true, force: true });
});

test("owner bills the release, the client pays and downloads the finals", async ({ browser }) => {
  const ownerContext = await browser.newContext();
  const owner = await ownerContext.newPage();
  await signIn(owner, OWNER);

  await owner.goto("/settings/billing");
  await owner.getByLabel("Currency").fill("EUR");
  await owner.getByLabel("Rate per track").fill("abc");
  await owner.getByRole("button", { name: "Save" }).click();
  await expect(owner.getByText("Write an amount like 250 or 250.50.")).toBeVisible();
  await owner.getByLabel("Rate per track").fill("320");
  await owner.getByLabel("Rate per extra revision").fill("45");
  await owner.getByRole("button", { name: "Save" }).click();
  await expect(owner.getByText("Saved.")).toBeVisible();

  // Deliveries through the worker: every format of the studio, from the approved print.
  await owner.goto(`/releases/${releaseId}/delivery`);
  await owner.getByRole("button", { name: "Make deliveries" }).click();
  await expect(owner.getByText(/deliver(y|ies) queued/)).toBeVisible();
  const rows = owner.getByRole("table", { name: "Deliveries" }).locator("tbody tr");
  await expect(async () => {
    await owner.reload();
    const states = await rows.locator("td:nth-child(3)").allTextContents();
    expect(states.length).toBeGreaterThan(0);
    expect(states.every((s) => s === "done")).toBe(true);
  }).toPass({ timeout: 90_000, intervals: [1_000, 2_000] });

  // The CD format is not wanted after all: deleted after a confirmation; its file stays listed, out of the package.
  await expect(owner.getByText("1 of 1 track is ready.", { exact: false })).toBeVisible();
  await owner.getByRole("link", { name: "Delete CD master 16-bit 44.1 kHz" }).click();
  await expect(owner.getByRole("heading", { name: "Delete the format “CD master 16-bit 44.1 kHz”?" })).toBeVisible();
  await expect(owner.getByText(/The file already made in it stays in storage/)).toBeVisible();
  mkdirSync(ARTIFACTS, { recursive: true });
  await owner.screenshot({ path: path.join(ARTIFACTS, "delivery-delete-format.png"), fullPage: true });
  await owner.getByRole("button", { name: "Delete format" }).click();
  await expect(owner.getByRole("table", { name: "Delivery formats" }).locator("tbody tr")).toHaveCount(1);
  await expect(owner.getByRole("table", { name: "Deliveries" }).getByText("format deleted or changed · not in the package")).toHaveCount(1);

  await owner.goto(`/releases/${releaseId}/loudness-report`);
  await expect(owner.getByRole("table", { name: "Loudness report" }).locator("tbody tr").first()).toContainText("Lantern tide");

  await owner.goto(`/releases/${releaseId}`);
  await owner.getByRole("button", { name: "Build invoice" }).click();
  await expect(owner.locator("[data-invoice-state=draft]")).toBeVisible();
  await expect(owner.locator("[data-invoice-total]")).toHaveText("320.00 EUR");
  await owner.getByRole("button", { name: "Send to client" }).click();
  await expect(owner.locator("[data-invoice-state=sent]")).toBeVisible();

  const clientContext = await browser.newContext({ acceptDownloads: true });
  const client = await clientContext.newPage();
  await signIn(client, CLIENT);
  await client.goto(`/releases/${releaseId}`);
  await expect(client.getByText("The final files unlock once the invoice is paid.")).toBeVisible();

  // At phone width the invoice's lines stack, each figure labelled, and nothing scrolls sideways.
  await client.setViewportSize({ width: 375, height: 812 });
  const invoiceCard = client.locator("[data-invoice-state=sent]");
  await invoiceCard.scrollIntoViewIfNeeded();
  const widths = await invoiceCard.evaluate((card) => {
    const table = card.querySelector("table")!;
    return { page: document.documentElement.scrollWidth, card: card.scrollWidth, cardClient: card.clientWidth, table: table.getBoundingClientRect().width, wrapper: table.parentElement!.scrollWidth - table.parentElement!.clientWidth };
  });
  expect(widths.page).toBeLessThanOrEqual(375);
  expect(widths.card).toBeLessThanOrEqual(widths.cardClient);
  expect(widths.wrapper).toBe(0);
  const firstLine = invoiceCard.locator("tbody tr").first();
  // Stacked: the amount sits below the item, not beside it.
  const [itemBox, amountBox] = await Promise.all([firstLine.locator("td").first().boundingBox(), firstLine.locator("td[data-label=Amount]").boundingBox()]);
  expect(amountBox!.y).toBeGreaterThan(itemBox!.y + itemBox!.height - 1);
  mkdirSync(ARTIFACTS, { recursive: true });
  await invoiceCard.screenshot({ path: path.join(ARTIFACTS, "invoice-phone-375.png") });
  await client.setViewportSize({ width: 1280, height: 800 });
  expect((await client.request.get(`/releases/${releaseId}/package.zip`)).status()).toBe(403);
  // The approved print: a client's address of it leads to the review room (where they listen); its file waits for the payment.
  await client.goto(printPage);
  await expect(client).toHaveURL(new RegExp(`/releases/${releaseId}/room`));
  expect((await client.request.get(`${printPage}/download`)).status()).toBe(403);
  await client.goto(`/releases/${releaseId}`);

  await client.getByRole("button", { name: "Pay 320.00 EUR" }).click();
  await expect(client.getByRole("heading", { name: "Local test payment" })).toBeVisible();
  await client.getByRole("button", { name: /^Pay/ }).click();
  await client.waitForURL((url) => url.pathname === `/releases/${releaseId}`);
  await expect(async () => {
    await client.reload();
    await expect(client.locator("[data-invoice-state=paid]")).toBeVisible({ timeout: 1_000 });
  }).toPass({ timeout: 20_000 });

  expect((await client.request.get(`${printPage}/download`)).status()).toBe(200);
  await client.goto(`/releases/${releaseId}`);

  const downloadPromise = client.waitForEvent("download");
  await client.getByRole("link", { name: "Download all finals (zip)" }).click();
  const download = await downloadPromise;
  const saved = path.join(tmp, "finals.zip");
  await download.saveAs(saved);
  const zip = readFileSync(saved);
  // A zip starts with a local file header "PK\x03\x04"; its names are stored in the clear.
  expect(zip.subarray(0, 4)).toEqual(Buffer.from([0x50, 0x4b, 0x03, 0x04]));
  expect(zip.includes(Buffer.from("Lantern tide"))).toBe(true);
  expect(zip.includes(Buffer.from(".csv"))).toBe(true);
  // Only the kept format's folder (zip names are stored in the clear).
  expect(zip.includes(Buffer.from("Streaming master 24-bit 48 kHz/"))).toBe(true);
  expect(zip.includes(Buffer.from("CD master"))).toBe(false);

  await ownerContext.close();
  await clientContext.close();
});
