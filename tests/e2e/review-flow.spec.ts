// The client review in two browsers against the production build and a
// worker (which delivers the mail outbox to the fake SMTP server). The test
// sets up a track with a mix and a finished render as stored rows (a
// synthesized WAV of our own; the render flow itself is render-flow.spec.ts).
// The engineer sends it for review; the client opens the link from the
// e-mail, sees the monitoring reminder, plays, leaves a comment at a time and
// asks for changes; the engineer sees the comment marker, a second render is
// sent; the client A/B-compares the two and approves the second.
import { randomUUID } from "node:crypto";
import { mkdirSync, mkdtempSync, readFileSync, rmSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { expect, test, type Browser, type Page } from "@playwright/test";
import knex from "knex";
import knexConfig from "../../knexfile.ts";
import { createWavWriter } from "../../dsp/io/wav-writer.ts";
import { storage } from "../../app/lib/storage/storage.server.ts";

const PASSWORD = "tidemark-demo";
const ENGINEER = "engineer@lanternquay.test";
const CLIENT = "mirelle@quane.test";
const ARTIFACTS = path.resolve("tests/artifacts");
const db = knex(knexConfig);
const tag = randomUUID().slice(0, 8);
const trackTitle = `Review run ${tag}`;
let releaseId = "";
let trackId = "";
let mixId = "";
let tmp = "";
const keys: string[] = [];

async function signIn(page: Page, email: string) {
  await page.goto("/sign-in");
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill(PASSWORD);
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByRole("navigation", { name: "Main" })).toBeVisible();
}

/** 4 s of a stereo tone with a slow swell; `gain` makes the second "render" differ in level. */
async function writeTone(filePath: string, gain: number) {
  const sampleRate = 44_100;
  const frames = 4 * sampleRate;
  const writer = await createWavWriter(filePath, { sampleRate, channels: 2, bitDepth: 16, float: false });
  const block = 4096;
  const out = [new Float64Array(block), new Float64Array(block)];
  for (let start = 0; start < frames; start += block) {
    const n = Math.min(block, frames - start);
    for (let i = 0; i < n; i++) {
      const t = (start + i) / sampleRate;
      const v = gain * (0.6 + 0.4 * Math.sin(2 * Math.PI * 0.5 * t)) * Math.sin(2 * Math.PI * 220 * t);
      out[0][i] = v;
      out[1][i] = v * 0.9;
    }
    await writer.write(out, n);
  }
  await writer.close();
  return { sampleRate, frames };
}

/** A finished print of the mix, as the worker would leave it. */
async function addFinishedRender(gain: number, integratedLufs: number): Promise<string> {
  const id = randomUUID();
  const file = path.join(tmp, `${id}.wav`);
  await writeTone(file, gain);
  const key = `renders/${id}/print.wav`;
  const bytes = readFileSync(file);
  await storage().put(key, bytes, { contentType: "audio/wav" });
  keys.push(key);
  const [chain] = await db("chains").insert({ studio_id: db("releases").where({ id: releaseId }).select("studio_id"), track_id: trackId, name: `Review chain ${id.slice(0, 4)}` }).returning("id");
  const [rev] = await db("chain_revisions").insert({ chain_id: chain.id, revision: 1, params: JSON.stringify({ stages: [] }) }).returning("id");
  await db("renders").insert({
    id,
    mix_id: mixId,
    chain_revision_id: rev.id,
    kind: "print",
    state: "done",
    progress: 1,
    finished_at: db.fn.now(),
    output_key: key,
    output_size_bytes: bytes.length,
    output_sample_rate_hz: 44_100,
    output_channels: 2,
    output_bit_depth: 16,
    output_sample_format: "int",
    output_analysis: JSON.stringify({ integratedLufs }),
  });
  return id;
}

type FakeMessage = { id: string; to: string[]; subject: string; text: string };

/** Waits for a new e-mail to `to` whose text holds `needle`, and returns the review link in it as a path. */
async function reviewLinkFromMail(to: string, needle: string, seen: Set<string>): Promise<string> {
  const api = process.env.FAKE_SMTP_API;
  if (!api) throw new Error("FAKE_SMTP_API is not set: the e2e run starts the fake SMTP server");
  let found: FakeMessage | undefined;
  await expect
    .poll(
      async () => {
        const list = (await (await fetch(`${api}/messages?to=${encodeURIComponent(to)}`)).json()) as FakeMessage[];
        found = list.find((m) => !seen.has(m.id) && m.text.includes(needle));
        return Boolean(found);
      },
      { timeout: 30_000, intervals: [500] },
    )
    .toBe(true);
  seen.add(found!.id);
  const link = /https?:\/\/\S+\/review\?render=[0-9a-f-]{36}/.exec(found!.text)?.[0];
  expect(link, "the e-mail carries a review link").toBeTruthy();
  // The link's host is TIDEMARK_PUBLIC_URL; the test follows it on the server under test.
  const url = new URL(link!);
  return `${url.pathname}${url.search}`;
}

async function shot(page: Page, name: string, testInfo: { attach: (n: string, o: { path: string; contentType: string }) => Promise<void> }) {
  mkdirSync(ARTIFACTS, { recursive: true });
  const file = path.join(ARTIFACTS, `${name}.png`);
  await page.screenshot({ path: file, fullPage: true });
  await testInfo.attach(name, { path: file, contentType: "image/png" });
}

test.beforeAll(async () => {
  tmp = mkdtempSync(path.join(os.tmpdir(), "tidemark-review-e2e-"));
  const release = await db("releases").where({ title: "Lowlight Weather" }).first("id");
  releaseId = release.id;
  const position = ((await db("tracks").where({ release_id: releaseId }).max("position as p").first())?.p ?? 0) + 1;
  [{ id: trackId }] = await db("tracks").insert({ release_id: releaseId, position, title: trackTitle }).returning("id");
  const mixFile = path.join(tmp, "mix.wav");
  const { frames } = await writeTone(mixFile, 0.5);
  mixId = randomUUID();
  const mixKey = `mixes/${mixId}/mix.wav`;
  await storage().put(mixKey, readFileSync(mixFile), { contentType: "audio/wav" });
  keys.push(mixKey);
  await db("mixes").insert({ id: mixId, track_id: trackId, version: 1, original_name: "review-run.wav", storage_key: mixKey, size_bytes: 1, sample_rate_hz: 44_100, channels: 2, bit_depth: 16, sample_format: "int", frames });
});

test.afterAll(async () => {
  if (trackId) {
    await db("review_events").where({ track_id: trackId }).delete();
    await db("review_requests").where({ track_id: trackId }).delete();
    await db("comments").where({ track_id: trackId }).delete();
    await db("renders").whereIn("mix_id", db("mixes").where({ track_id: trackId }).select("id")).delete();
    await db("chains").where({ track_id: trackId }).delete();
    await db("mixes").where({ track_id: trackId }).delete();
    await db("tracks").where({ id: trackId }).delete();
  }
  for (const key of keys) await storage().delete(key).catch(() => undefined);
  if (tmp) rmSync(tmp, { recursive: true, force: true });
  await db.destroy();
});

async function newPage(browser: Browser, email: string) {
  const context = await browser.newContext();
  const page = await context.newPage();
  await signIn(page, email);
  return page;
}

async function sendFromRenderPage(page: Page, renderId: string, message: string) {
  await page.goto(`/releases/${releaseId}/tracks/${trackId}/renders/${renderId}`);
  await page.getByLabel(/Message to/).fill(message);
  await page.getByRole("button", { name: "Send for review" }).click();
  await expect(page.getByRole("status").filter({ hasText: "Sent." })).toBeVisible();
}

test("an engineer sends a render; the client comments, asks for changes, then approves the next", async ({ browser }, testInfo) => {
  const seen = new Set<string>();
  const first = await addFinishedRender(0.5, -14);
  const engineer = await newPage(browser, ENGINEER);
  const client = await newPage(browser, CLIENT);

  await sendFromRenderPage(engineer, first, `First pass of ${trackTitle}.`);
  const firstLink = await reviewLinkFromMail(CLIENT, `First pass of ${trackTitle}.`, seen);
  expect(firstLink).toContain(`render=${first}`);

  // The client's release page lists what was sent, with the track's state.
  await client.goto(`/releases/${releaseId}`);
  await expect(client.locator(`[data-sent-render="${first}"]`)).toContainText(`First pass of ${trackTitle}.`);
  await expect(client.getByRole("row", { name: new RegExp(trackTitle) })).toContainText("Sent for review");

  await client.goto(firstLink);
  await expect(client.getByTestId("monitoring-reminder")).toBeVisible();
  await expect(client.getByTestId("review-status")).toHaveText("Sent for review");
  const audio = client.getByTestId("review-audio");
  await expect.poll(() => audio.evaluate((a: HTMLAudioElement) => a.readyState), { timeout: 15_000 }).toBeGreaterThanOrEqual(1);
  await audio.evaluate((a: HTMLAudioElement) => {
    a.muted = true; // The test machine has no one listening; the element still plays.
    return a.play();
  });
  await expect.poll(() => audio.evaluate((a: HTMLAudioElement) => a.currentTime), { timeout: 10_000 }).toBeGreaterThan(0);
  await audio.evaluate((a: HTMLAudioElement) => a.pause());

  // A click halfway along the timeline picks about 2 s of the 4 s render.
  const timeline = client.getByTestId("review-timeline");
  const box = (await timeline.boundingBox())!;
  await timeline.click({ position: { x: box.width / 2, y: box.height / 2 } });
  await expect(client.getByLabel(/^At/)).toHaveValue(/^0:0[12]/);
  await client.getByRole("textbox", { name: "Comment" }).fill("The swell here feels squeezed.");
  await client.getByRole("button", { name: "Add comment" }).click();
  await expect(client.locator("[data-comment]").filter({ hasText: "The swell here feels squeezed." })).toBeVisible();
  await client.getByLabel("What should change?").fill("Let the swell breathe a little more.");
  await client.getByRole("button", { name: "Ask for changes" }).click();
  await expect(client.getByTestId("review-status")).toHaveText("Changes asked");
  await shot(client, "review-page-changes-asked", testInfo);

  // The engineer sees the marker; clicking it moves playback to the comment's time.
  await engineer.goto(`/releases/${releaseId}/tracks/${trackId}/review?render=${first}`);
  const marker = engineer.locator("[data-comment-marker]");
  await expect(marker).toHaveCount(1);
  const markerTimeS = Number(await marker.getAttribute("data-time-s"));
  expect(markerTimeS).toBeGreaterThan(1);
  expect(markerTimeS).toBeLessThan(3);
  const engineerAudio = engineer.getByTestId("review-audio");
  await expect.poll(() => engineerAudio.evaluate((a: HTMLAudioElement) => a.readyState), { timeout: 15_000 }).toBeGreaterThanOrEqual(1);
  await engineerAudio.evaluate((a: HTMLAudioElement) => {
    a.muted = true;
  });
  await marker.click();
  await expect.poll(() => engineerAudio.evaluate((a: HTMLAudioElement) => a.currentTime), { timeout: 10_000 }).toBeGreaterThanOrEqual(markerTimeS - 0.05);
  await engineerAudio.evaluate((a: HTMLAudioElement) => a.pause());

  // "Renders again": a second finished render (quieter, as if the limiter eased off), sent with a note.
  const second = await addFinishedRender(0.35, -17);
  await sendFromRenderPage(engineer, second, `Second pass of ${trackTitle}.`);
  const secondLink = await reviewLinkFromMail(CLIENT, `Second pass of ${trackTitle}.`, seen);

  // The client compares the two sent renders, level-matched, and switches A/B.
  await client.goto(`/releases/${releaseId}/tracks/${trackId}/compare?a=${second}&b=${first}`);
  await expect(client.getByTestId("monitoring-reminder").first()).toBeVisible();
  const player = client.getByTestId("ab-player");
  await expect(player).toHaveAttribute("data-state", "ready", { timeout: 30_000 });
  await expect(player).toHaveAttribute("data-active-source", "A");
  // Level matching: A (the second render, -17 LUFS stored) plays as it is; B (the first, -14 LUFS) is brought down 3 dB.
  expect(Number(await player.getAttribute("data-match-gain-db"))).toBeCloseTo(0, 1);
  await player.getByRole("group", { name: "Source" }).getByRole("button").nth(1).click();
  await expect(player).toHaveAttribute("data-active-source", "B");
  expect(Number(await player.getAttribute("data-match-gain-db"))).toBeCloseTo(-3, 1);
  await shot(client, "compare-page-client", testInfo);

  await client.goto(secondLink);
  await expect(client.getByTestId("review-status")).toHaveText("Sent for review");
  await client.getByRole("button", { name: "Approve this master" }).click();
  await expect(client.getByTestId("review-status")).toHaveText("Approved");
  await expect(client.getByText("This master is approved.")).toBeVisible();
  await shot(client, "review-page-approved", testInfo);

  await client.goto(`/releases/${releaseId}`);
  await expect(client.getByRole("row", { name: new RegExp(trackTitle) })).toContainText("Approved");
});
