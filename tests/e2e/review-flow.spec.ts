// The client's review in two browsers against the production build and its
// worker, which renders the previews and delivers the mail outbox to the fake
// SMTP server. The engineer makes a track and uploads a synthesized mix of our
// own through the API, renders a short preview of a region (1–5 s of the song)
// and waits for the worker, listens to it against its own mix on the compare
// page, and sends it for review. The client opens the e-mailed link to the
// review room, confirms a safe level, plays, sees the stored waveform drawn,
// clicks on it and comments at that moment of the song, and approves; a
// further render by the engineer leaves the approval standing; version 2 is
// sent after the warning; the client hears both versions and switches. The
// owner finds the outbox in the navigation.
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
  const link = /https?:\/\/\S+\/room\?track=[0-9a-f-]{36}&render=[0-9a-f-]{36}/.exec(found!.text)?.[0];
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
  await page.getByLabel("Chain", { exact: true }).selectOption({ label: `${template} · rev 1 (template)` });
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

async function sendFromRenderPage(page: Page, renderId: string, message: string, options: { expectWarning?: boolean } = {}) {
  await page.goto(`/releases/${releaseId}/tracks/${trackId}/renders/${renderId}`);
  await page.getByLabel(/Message to/).fill(message);
  const warning = page.getByTestId("send-warning");
  if (options.expectWarning) {
    // The client approved another version: the engineer is told, and confirms.
    await expect(warning).toContainText("asks them to review again");
    await warning.getByLabel("Ask the client to review again").check();
  } else {
    await expect(warning).toHaveCount(0);
  }
  await page.getByRole("button", { name: "Send for review" }).click();
  await expect(page.getByRole("status").filter({ hasText: "Sent." })).toBeVisible();
}

test("an engineer sends a preview; the client plays it in the room, comments at a moment, approves; version 2 keeps the approval shown until heard", async ({ browser }, testInfo) => {
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

  // The client's release page lists what was sent and leads to the room; a compare address leads there too.
  await client.goto(`/releases/${releaseId}`);
  await expect(client.locator(`[data-sent-render="${first}"]`)).toContainText(`First pass of ${trackTitle}.`);
  await expect(client.getByRole("row", { name: new RegExp(trackTitle) })).toContainText("Sent for review");
  await client.goto(`/releases/${releaseId}/tracks/${trackId}/compare`);
  await expect(client).toHaveURL(new RegExp(`/releases/${releaseId}/room\\?track=${trackId}`));

  await client.setViewportSize({ width: 1280, height: 900 });
  await client.goto(firstLink);
  await expect(client.getByTestId("monitoring-reminder").first()).toBeVisible();
  await expect(client.getByTestId("review-status")).toHaveText("Sent for review (version 1)");
  await expect(client.getByTestId("engineer-message")).toContainText(`First pass of ${trackTitle}.`);
  await expect(client.getByTestId("room-version-name")).toHaveText(`Preview of ${trackTitle}, version 1`);
  const player = client.getByTestId("ab-player");
  await expect(player).toHaveAttribute("data-state", "ready", { timeout: 30_000 });
  // The song's time: the preview of 1–5 s starts at 0:01.0, in the clock and the "At" field's hint.
  await expect(client.getByTestId("player-clock")).toHaveText(/^0:01\.0 \/ 0:05\.0$/);
  await expect(client.getByTestId("comment-time")).toHaveAttribute("placeholder", "0:01.0");
  // The waveform is drawn from the peaks the worker stored, and is not blank.
  const canvas = player.getByTestId("waveform");
  await expect(canvas).toHaveAttribute("data-peaks", "stored");
  const inked = await canvas.evaluate((c: HTMLCanvasElement) => {
    const g = c.getContext("2d")!;
    const { data } = g.getImageData(0, 0, c.width, c.height);
    const ground = data.slice(0, 4).join();
    let differing = 0;
    for (let i = 0; i < data.length; i += 4) if (data.slice(i, i + 4).join() !== ground) differing++;
    return differing / (data.length / 4);
  });
  expect(inked, "share of the canvas drawn in another colour than its ground").toBeGreaterThan(0.05);

  // Play: the safe-level confirmation first, then the clock runs.
  await player.getByRole("button", { name: "Play" }).click();
  await expect(client.getByTestId("monitoring-notice")).toBeVisible();
  await client.getByRole("button", { name: "My level is safe — play" }).click();
  await expect(player).toHaveAttribute("data-playing", "true");
  await expect.poll(async () => Number(await player.getAttribute("data-position-s")), { timeout: 10_000 }).toBeGreaterThan(1.05);
  await player.getByRole("button", { name: "Pause" }).click();

  // A click at 60 % of the waveform of the 1–5 s preview is 3.4 s into the song: the "At" field says so (within 0.1 s).
  const waveBox = (await canvas.boundingBox())!;
  await canvas.click({ position: { x: waveBox.width * 0.6, y: waveBox.height / 2 } });
  const clickedS = 1 + 4 * (Math.round(waveBox.width * 0.6) / waveBox.width);
  const at = await client.getByTestId("comment-time").inputValue();
  const [, m, sec] = /^(\d+):(\d+(?:\.\d+)?)$/.exec(at)!;
  expect(Math.abs(Number(m) * 60 + Number(sec) - clickedS)).toBeLessThanOrEqual(0.1);
  await client.getByRole("textbox", { name: "Comment" }).fill("The swell here feels squeezed.");
  await client.getByRole("button", { name: "Add comment" }).click();
  const thread = client.locator("[data-comment]").filter({ hasText: "The swell here feels squeezed." });
  await expect(thread).toBeVisible();
  const marker = player.locator("[data-comment-marker]");
  await expect(marker).toHaveCount(1);
  expect(Math.abs(Number(await marker.getAttribute("data-time-s")) - clickedS)).toBeLessThanOrEqual(0.1);
  // The comment's time plays from there (the level was confirmed in this session).
  await expect(player).toHaveAttribute("data-state", "ready", { timeout: 30_000 });
  await thread.getByRole("button", { name: at }).click();
  await expect(player).toHaveAttribute("data-playing", "true");
  expect(Number(await player.getAttribute("data-position-s"))).toBeGreaterThanOrEqual(clickedS - 0.2);
  await player.getByRole("button", { name: "Pause" }).click();
  await shot(client, "review-room-1280", testInfo);

  await expect(client.getByText("You approve this master. The final files are made from exactly these settings.")).toBeVisible();
  await client.getByRole("button", { name: "Approve", exact: true }).click();
  await expect(client.getByTestId("review-status")).toHaveText("Approved: version 1");

  // The engineer renders another preview: the client's approval still stands.
  const second = await renderPreview(engineer, "Open and loud");
  await client.reload();
  await expect(client.getByTestId("review-status")).toHaveText("Approved: version 1");

  // Version 2 goes out after the warning; the client hears both and switches, at matched loudness.
  await sendFromRenderPage(engineer, second, `Second pass of ${trackTitle}.`, { expectWarning: true });
  const secondLink = await reviewLinkFromMail(CLIENT, `Second pass of ${trackTitle}.`, seen);
  const [secondLufs, firstLufs] = [await outputLufs(engineer, second), await outputLufs(engineer, first)];
  const differenceDb = secondLufs - firstLufs;
  await client.goto(secondLink);
  await expect(client.getByTestId("review-status")).toHaveText("Sent for review (version 2) · approved: version 1");
  await expect(client.getByTestId("room-version-name")).toHaveText(`Preview of ${trackTitle}, version 2`);
  await expect(player).toHaveAttribute("data-state", "ready", { timeout: 30_000 });
  const versions = player.getByRole("group", { name: "Version" });
  await expect(versions.getByRole("button")).toHaveText(["This version", "The previous version"]);
  await expect(player).toHaveAttribute("data-active-source", "A");
  await expect.poll(async () => Number(await player.getAttribute("data-match-gain-db")), { timeout: 10_000 }).toBeCloseTo(differenceDb > 0 ? -differenceDb : 0, 1);
  await versions.getByRole("button", { name: "The previous version" }).click();
  await expect(player).toHaveAttribute("data-active-source", "B");
  expect(Number(await player.getAttribute("data-match-gain-db"))).toBeCloseTo(differenceDb < 0 ? differenceDb : 0, 1);
  // Nothing of the studio's: no chain or mix file names on the client's page.
  await expect(client.locator("body")).not.toContainText("Open and loud");
  await expect(client.locator("body")).not.toContainText("review-run.wav");
  await shot(client, "review-room-version-2-1280", testInfo);

  // At phone width the room does not scroll sideways, once its layout has settled.
  await client.setViewportSize({ width: 375, height: 800 });
  await expect(player).toHaveAttribute("data-state", "ready");
  await expect.poll(() => client.evaluate(() => document.documentElement.scrollWidth), { timeout: 5_000 }).toBeLessThanOrEqual(375);
  await shot(client, "review-room-375", testInfo);
  await client.setViewportSize({ width: 1280, height: 900 });

  await client.goto(`/releases/${releaseId}`);
  await expect(client.getByRole("row", { name: new RegExp(trackTitle) })).toContainText("Sent for review");
});

test("the owner finds the outbox in the navigation, with the review mail the fake server caught", async ({ browser }) => {
  const owner = await newPage(browser, OWNER);
  await owner.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Outbox" }).click();
  await expect(owner.getByRole("heading", { level: 1, name: "Outbox" })).toBeVisible();
  // The review requests of the flow above (this file's tests run in order, in one worker).
  await expect(owner.getByRole("table", { name: "Outbox" }).locator("tr", { hasText: "review_request" }).filter({ hasText: "Review run" }).first()).toBeVisible();
});
