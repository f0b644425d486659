// The client review in two browsers against the production build and its
// worker, which renders the previews and delivers the mail outbox to the fake
// SMTP server. The engineer makes a track and uploads a synthesized mix of our
// own through the API, renders a short preview of a region on the render page
// and waits for the worker, listens to it against its own mix on the compare
// page, and sends it for review. The client opens the link from the e-mail,
// sees the monitoring reminder, plays, leaves a comment at a time and asks
// for changes; the engineer sees the comment marker, renders again through
// another template and sends that; the client A/B-compares the two
// level-matched and approves the second. The owner finds the outbox in the
// navigation.
import { randomUUID } from "node:crypto";
import { mkdirSync, mkdtempSync, readFileSync, rmSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { expect, test, type Browser, type Page } from "@playwright/test";
import knex from "knex";
import knexConfig from "../../knexfile.ts";
import { createWavWriter } from "../../dsp/io/wav-writer.ts";
import { signIn } from "./demo-sign-in.ts";

const ENGINEER = "engineer@lanternquay.test";
const CLIENT = "mirelle@quane.test";
const OWNER = "owner@lanternquay.test";
const ARTIFACTS = path.resolve("tests/artifacts");
const db = knex(knexConfig);
const tag = randomUUID().slice(0, 8);
const trackTitle = `Review run ${tag}`;
let releaseId = "";
let trackId = "";
let tmp = "";

/** 8 s of a stereo tone with a slow swell and a little noise: something for the chain's stages to act on. */
async function writeMix(filePath: string) {
  const sampleRate = 44_100;
  const frames = 8 * sampleRate;
  const writer = await createWavWriter(filePath, { sampleRate, channels: 2, bitDepth: 16, float: false });
  const block = 4096;
  const out = [new Float64Array(block), new Float64Array(block)];
  let seed = 0x1234567;
  const noise = () => {
    // xorshift32: the same mix on every run.
    seed ^= seed << 13;
    seed ^= seed >>> 17;
    seed ^= seed << 5;
    return ((seed >>> 0) / 0xffffffff) * 2 - 1;
  };
  for (let start = 0; start < frames; start += block) {
    const n = Math.min(block, frames - start);
    for (let i = 0; i < n; i++) {
      const t = (start + i) / sampleRate;
      const swell = 0.6 + 0.4 * Math.sin(2 * Math.PI * 0.5 * t);
      const v = 0.5 * swell * (Math.sin(2 * Math.PI * 220 * t) + 0.3 * Math.sin(2 * Math.PI * 70 * t)) + 0.05 * noise();
      out[0][i] = v;
      out[1][i] = v * 0.9;
    }
    await writer.write(out, n);
  }
  await writer.close();
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
});

test.afterAll(async () => {
  // Only what this run made: its track, with its mix, renders, chains, comments and review rows (the files stay in the test storage, which npm test starts empty).
  if (trackId) {
    await db("review_events").where({ track_id: trackId }).delete();
    await db("review_requests").where({ track_id: trackId }).delete();
    await db("comments").where({ track_id: trackId }).delete();
    await db("renders").whereIn("mix_id", db("mixes").where({ track_id: trackId }).select("id")).delete();
    await db("chains").where({ track_id: trackId }).delete();
    await db("mixes").where({ track_id: trackId }).delete();
    await db("tracks").where({ id: trackId }).delete();
  }
  if (tmp) rmSync(tmp, { recursive: true, force: true });
  await db.destroy();
});

async function newPage(browser: Browser, email: string) {
  const context = await browser.newContext();
  const page = await context.newPage();
  await signIn(page, email);
  return page;
}

/** Through the API, with the engineer's session: a new track on the release and the synthesized mix as its v1; waits for the worker's analysis. */
async function trackWithMix(page: Page): Promise<string> {
  const created = await page.request.post(`/api/releases/${releaseId}/tracks`, { data: { title: trackTitle } });
  expect(created.status()).toBe(201);
  trackId = ((await created.json()) as { track: { id: string } }).track.id;
  const mixFile = path.join(tmp, "review-run.wav");
  await writeMix(mixFile);
  const upload = await page.request.post(`/api/tracks/${trackId}/mixes`, { data: readFileSync(mixFile), headers: { "Content-Type": "audio/wav", "X-File-Name": "review-run.wav" } });
  expect(upload.status()).toBe(201);
  const mixId = ((await upload.json()) as { mix: { id: string } }).mix.id;
  // The mix's loudness (for level matching against it) comes from the worker's analysis.
  await expect
    .poll(async () => ((await (await page.request.get(`/api/tracks/${trackId}/mixes`)).json()) as { mixes: { analysisState: string }[] }).mixes[0]?.analysisState, { timeout: 60_000 })
    .toBe("done");
  return mixId;
}

/** On the render page: a preview of 1–5 s through a studio template; waits until the worker has finished it. */
async function renderPreview(page: Page, template: string): Promise<string> {
  await page.goto(`/releases/${releaseId}/tracks/${trackId}`);
  await page.getByRole("link", { name: "New render" }).click();
  await page.getByLabel("Chain").selectOption({ label: `${template} · rev 1 (template)` });
  await page.getByLabel("From … to …").check();
  await page.getByLabel("Start (s)").fill("1");
  await page.getByLabel("End (s)").fill("5");
  await page.getByRole("button", { name: "Render", exact: true }).click();
  await expect(page.getByRole("heading", { level: 1, name: "Preview of v1" })).toBeVisible();
  await expect(page.getByTestId("render-state")).toHaveAttribute("data-state", "done", { timeout: 90_000 });
  const id = /\/renders\/([0-9a-f-]{36})/.exec(page.url())?.[1];
  expect(id, "the render page's address names the render").toBeTruthy();
  return id!;
}

/** The integrated loudness the worker measured on a render's output, from the API. */
async function outputLufs(page: Page, renderId: string): Promise<number> {
  const body = (await (await page.request.get(`/api/renders/${renderId}`)).json()) as { render: { outputAnalysis: { integratedLufs: number } } };
  return body.render.outputAnalysis.integratedLufs;
}

async function sendFromRenderPage(page: Page, renderId: string, message: string) {
  await page.goto(`/releases/${releaseId}/tracks/${trackId}/renders/${renderId}`);
  await page.getByLabel(/Message to/).fill(message);
  await page.getByRole("button", { name: "Send for review" }).click();
  await expect(page.getByRole("status").filter({ hasText: "Sent." })).toBeVisible();
}

test("an engineer sends a render; the client comments, asks for changes, then approves the next", async ({ browser }, testInfo) => {
  test.setTimeout(300_000);
  const seen = new Set<string>();
  const engineer = await newPage(browser, ENGINEER);
  const client = await newPage(browser, CLIENT);
  const mixId = await trackWithMix(engineer);
  const first = await renderPreview(engineer, "Gentle master");

  // The engineer's compare page opens on the new render against its own mix, level-matched.
  await engineer.goto(`/releases/${releaseId}/tracks/${trackId}/compare`);
  const enginePlayer = engineer.getByTestId("ab-player");
  await expect(enginePlayer).toHaveAttribute("data-state", "ready", { timeout: 30_000 });
  await expect(engineer.locator("select[name=b]")).toHaveValue(`mix:${mixId}`);
  await expect(engineer.getByTestId("legend-b-unprocessed")).toBeVisible();
  await expect(engineer.getByRole("table", { name: "Analyses of A and B" }).locator("tr[data-measure='integratedLufs'] [data-difference]")).toContainText("LU");
  await expect(enginePlayer).toHaveAttribute("data-loaded", "full");
  await shot(engineer, "compare-page-render-against-mix", testInfo);
  // A loop dragged across the middle of the waveform; the traces zoom to it while the player plays on as it was.
  const wave = (await enginePlayer.locator("canvas").boundingBox())!;
  await engineer.mouse.move(wave.x + wave.width * 0.25, wave.y + wave.height / 2);
  await engineer.mouse.down();
  await engineer.mouse.move(wave.x + wave.width * 0.75, wave.y + wave.height / 2, { steps: 5 });
  await engineer.mouse.up();
  await expect(enginePlayer.getByTestId("loop-region")).toHaveText(/^Loop 0:02\.\d – 0:04\.\d$/);
  const readyMs = await enginePlayer.getAttribute("data-ready-ms");
  await engineer.getByRole("button", { name: "Zoom to the loop" }).click();
  const charts = engineer.getByTestId("trace-charts");
  await expect(charts).toHaveAttribute("data-zoomed", "true");
  expect(Number(await charts.getAttribute("data-start-s"))).toBeCloseTo(2, 0);
  expect(Number(await charts.getAttribute("data-end-s"))).toBeCloseTo(4, 0);
  await expect(engineer).toHaveURL(/zoom=2\.\d+-4\.\d+/);
  expect(await enginePlayer.getAttribute("data-ready-ms")).toBe(readyMs);
  await engineer.getByRole("button", { name: "Show the whole span" }).click();
  await expect(charts).toHaveAttribute("data-zoomed", "false");

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

  // A click halfway along the timeline of the 1–5 s preview picks about 3 s on the mix's time axis.
  const timeline = client.getByTestId("review-timeline");
  const box = (await timeline.boundingBox())!;
  await timeline.click({ position: { x: box.width / 2, y: box.height / 2 } });
  await expect(client.getByLabel(/^At/)).toHaveValue(/^0:0[23]/);
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
  expect(markerTimeS).toBeGreaterThan(2);
  expect(markerTimeS).toBeLessThan(4);
  const engineerAudio = engineer.getByTestId("review-audio");
  await expect.poll(() => engineerAudio.evaluate((a: HTMLAudioElement) => a.readyState), { timeout: 15_000 }).toBeGreaterThanOrEqual(1);
  await engineerAudio.evaluate((a: HTMLAudioElement) => {
    a.muted = true;
  });
  await marker.click();
  await expect.poll(() => engineerAudio.evaluate((a: HTMLAudioElement) => a.currentTime), { timeout: 10_000 }).toBeGreaterThanOrEqual(markerTimeS - 0.05);
  await engineerAudio.evaluate((a: HTMLAudioElement) => a.pause());

  // Renders again, through another template, and sends that with a note.
  const second = await renderPreview(engineer, "Hot and dense");
  await sendFromRenderPage(engineer, second, `Second pass of ${trackTitle}.`);
  const secondLink = await reviewLinkFromMail(CLIENT, `Second pass of ${trackTitle}.`, seen);

  // The client compares the two sent renders, level-matched by the worker's measurements, and switches A/B.
  const [secondLufs, firstLufs] = [await outputLufs(engineer, second), await outputLufs(engineer, first)];
  const differenceDb = secondLufs - firstLufs;
  await client.goto(`/releases/${releaseId}/tracks/${trackId}/compare?a=render:${second}&b=render:${first}`);
  await expect(client.getByTestId("monitoring-reminder").first()).toBeVisible();
  const player = client.getByTestId("ab-player");
  await expect(player).toHaveAttribute("data-state", "ready", { timeout: 30_000 });
  await expect(player).toHaveAttribute("data-active-source", "A");
  // The louder of the two is turned down by the difference of integrated loudness; the quieter plays as it is.
  await expect.poll(async () => Number(await player.getAttribute("data-match-gain-db")), { timeout: 10_000 }).toBeCloseTo(differenceDb > 0 ? -differenceDb : 0, 1);
  await player.getByRole("group", { name: "Source" }).getByRole("button").nth(1).click();
  await expect(player).toHaveAttribute("data-active-source", "B");
  expect(Number(await player.getAttribute("data-match-gain-db"))).toBeCloseTo(differenceDb < 0 ? differenceDb : 0, 1);
  // A client hears renders only: no mix among the sources.
  await expect(client.locator("select[name=b] option[value^='mix:']")).toHaveCount(0);
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

test("the owner finds the outbox in the navigation, with the review mail the fake server caught", async ({ browser }) => {
  const owner = await newPage(browser, OWNER);
  await owner.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Outbox" }).click();
  await expect(owner.getByRole("heading", { level: 1, name: "Outbox" })).toBeVisible();
  // The review requests of the flow above (this file's tests run in order, in one worker).
  await expect(owner.getByRole("table", { name: "Outbox" }).locator("tr", { hasText: "review_request" }).filter({ hasText: "Review run" }).first()).toBeVisible();
});
