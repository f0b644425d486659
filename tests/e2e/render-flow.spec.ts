// Mixes and renders in Chromium against the production build and a worker:
// an engineer uploads a synthesized mix, sees its analysis arrive, renders a
// preview through the studio's gentle template (progress, analyses and
// traces appear without a reload), then a print, downloads it, and the file
// is a valid WAV whose true peak is at or under the chain's ceiling.
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { expect, test } from "@playwright/test";
import { createWavWriter } from "../../dsp/io/wav-writer.ts";
import { probeWav } from "../../dsp/io/wav-reader.ts";
import { analyzeFile } from "../../dsp/analysis.ts";
import knex from "knex";
import knexConfig from "../../knexfile.ts";
import { parseChain } from "../../dsp/chain/schema.ts";
import { signIn } from "./demo-sign-in.ts";

const ENGINEER = "engineer@lanternquay.test";
const TEMPLATE = "Gentle master";
const gentleMaster = JSON.parse(readFileSync(new URL("../../examples/gentle-master.json", import.meta.url), "utf8")) as {
  stages: { type: string; ceilingDbtp?: number }[];
};

/** 10 s of stereo noise shaped by a swell, with two tones over it: enough for every band to act. */
async function writeMix(filePath: string): Promise<void> {
  const sampleRate = 44_100;
  const frames = 10 * sampleRate;
  const writer = await createWavWriter(filePath, { sampleRate, channels: 2, bitDepth: 24, float: false });
  const block = 4_096;
  const out = [new Float64Array(block), new Float64Array(block)];
  let seed = 0x2545f491;
  const noise = () => {
    // xorshift32: deterministic, so every run hears the same mix.
    seed ^= seed << 13;
    seed ^= seed >>> 17;
    seed ^= seed << 5;
    return ((seed >>> 0) / 0xffffffff) * 2 - 1;
  };
  let lowpass = 0;
  for (let start = 0; start < frames; start += block) {
    const n = Math.min(block, frames - start);
    for (let i = 0; i < n; i++) {
      const t = (start + i) / sampleRate;
      const swell = 0.55 + 0.45 * Math.sin(2 * Math.PI * 0.4 * t);
      lowpass += 0.2 * (noise() - lowpass);
      const tones = 0.3 * Math.sin(2 * Math.PI * 82.4 * t) + 0.15 * Math.sin(2 * Math.PI * 659.3 * t);
      // Hot enough that its peaks pass the chain's ceiling: the limiter has work to do.
      out[0][i] = 1.4 * swell * (0.35 * lowpass + tones);
      out[1][i] = 1.4 * swell * (0.35 * lowpass + 0.95 * tones);
    }
    await writer.write(out, n);
  }
  await writer.close();
}

// A fresh test database is seeded with the studio templates; a reused one may predate them, so the gentle one is added if missing.
test.beforeAll(async () => {
  const db = knex(knexConfig);
  try {
    const studio = await db("studios").where({ name: "Lantern Quay Mastering" }).first("id");
    if (!studio) throw new Error("the demo studio is missing: run the tests on a seeded database");
    const exists = await db("chains").where({ studio_id: studio.id, name: TEMPLATE }).whereNull("track_id").first("id");
    if (exists) return;
    const parsed = parseChain(gentleMaster);
    if (!parsed.ok) throw new Error("examples/gentle-master.json is not a valid chain");
    const [chain] = await db("chains").insert({ studio_id: studio.id, track_id: null, name: TEMPLATE }).returning("id");
    await db("chain_revisions").insert({ chain_id: chain.id, revision: 1, params: JSON.stringify(parsed.chain) });
  } finally {
    await db.destroy();
  }
});

test("an engineer uploads a mix, renders a preview and a print, and downloads the print", async ({ page }, testInfo) => {
  test.setTimeout(240_000);
  const scratch = mkdtempSync(path.join(os.tmpdir(), "tidemark-e2e-render-"));
  try {
    const mixPath = path.join(scratch, "Estuary Light mix 1.wav");
    await writeMix(mixPath);

    await signIn(page, ENGINEER);
    const title = `Estuary Light ${Date.now().toString(36)}`;
    await page.getByRole("link", { name: "New release" }).click();
    await page.getByLabel("Title").fill(title);
    await page.getByLabel("Kind").selectOption({ label: "Single" });
    await page.getByLabel("Client").selectOption({ label: "Mirelle Quane" });
    await page.getByRole("button", { name: "Create release" }).click();
    await page.getByRole("link", { name: "Add track" }).click();
    await page.getByLabel("Title").fill("Estuary Light");
    await page.getByRole("button", { name: "Add track" }).click();
    await page.getByRole("link", { name: "Estuary Light" }).first().click();
    await expect(page.getByRole("heading", { level: 1, name: "Estuary Light" })).toBeVisible();

    // Upload through the script path: a progress bar, then the new version in the table.
    await page.getByLabel("Upload a new mix version (WAV)").setInputFiles(mixPath);
    await page.getByRole("button", { name: "Upload", exact: true }).click();
    await expect(page.getByRole("list", { name: "Uploads" }).getByRole("progressbar")).toBeVisible();
    await expect(page.getByText("stored as v1")).toBeVisible({ timeout: 30_000 });
    const v1 = page.getByRole("table", { name: "Mix versions" }).locator("tr[data-mix-version='1']");
    await expect(v1).toContainText("PCM 24-bit · 44.1 kHz · stereo");
    await expect(v1).toContainText("0:10.0");
    // The analysis arrives from the worker while the page polls.
    await expect(v1).toContainText("done", { timeout: 60_000 });
    await expect(v1).toContainText(/−\d+\.\d LUFS/);
    await expect(v1).toContainText(/dBTP/);

    await page.setViewportSize({ width: 375, height: 800 });
    // Charts and players re-measure on their resize observers' next frames: wait for the layout to settle, then read it.
    await expect.poll(() => page.evaluate(() => document.documentElement.scrollWidth), { timeout: 5_000 }).toBeLessThanOrEqual(375);
    await page.setViewportSize({ width: 1280, height: 800 });

    // A refused file: the reader's reason beside the form, nothing added.
    const notWav = path.join(scratch, "notes.wav");
    writeFileSync(notWav, "liner notes, not audio\n".repeat(100));
    await page.getByLabel("Upload a new mix version (WAV)").setInputFiles(notWav);
    await page.getByRole("button", { name: "Upload", exact: true }).click();
    await expect(page.getByText("The file was refused: not a WAV file")).toBeVisible();
    await expect(page.getByRole("table", { name: "Mix versions" }).locator("tbody tr")).toHaveCount(1);

    // A preview of a region through the studio's gentle template.
    await page.getByRole("link", { name: "New render" }).click();
    await page.getByLabel("Chain", { exact: true }).selectOption({ label: `${TEMPLATE} · rev 1 (template)` });
    await page.getByLabel("From … to …").check();
    await page.getByLabel("Start (s)").fill("1");
    await page.getByLabel("End (s)").fill("9");
    await page.getByRole("button", { name: "Render", exact: true }).click();
    await expect(page.getByRole("heading", { level: 1, name: "Preview of v1" })).toBeVisible();
    const state = page.getByTestId("render-state");
    await expect(state).toBeVisible();
    // The bar shows while queued or running (a fast worker may already be done: then the results show).
    await expect(state.getByRole("progressbar").or(page.getByRole("table", { name: "Analyses" }))).toBeVisible();
    await expect(state).toHaveAttribute("data-state", "done", { timeout: 90_000 });
    await expect(page.getByRole("table", { name: "Analyses" })).toBeVisible();
    await expect(page.getByRole("table", { name: "Analyses" }).locator("tr[data-measure='truePeakDbtp']")).toContainText("dBTP");
    const traces = page.getByTestId("render-traces");
    await expect(traces.locator("figure[data-stage='multiband'] svg .recharts-area").first()).toBeVisible();
    await expect(traces.locator("figure[data-stage='loudness'] svg .recharts-line")).toBeVisible();
    await expect(page.getByTestId("monitoring-reminder")).toBeVisible();
    await expect(page.locator("audio")).toHaveAttribute("src", /\/download\?inline=1$/);
    await page.screenshot({ path: testInfo.outputPath("render-preview.png"), fullPage: true });

    // At phone width the page does not scroll sideways.
    await page.setViewportSize({ width: 375, height: 800 });
    // Charts and players re-measure on their resize observers' next frames: wait for the layout to settle, then read it.
    await expect.poll(() => page.evaluate(() => document.documentElement.scrollWidth), { timeout: 5_000 }).toBeLessThanOrEqual(375);
    await page.setViewportSize({ width: 1280, height: 800 });

    // Then the print, and its download.
    await page.getByRole("link", { name: "Render a print" }).click();
    await expect(page.getByLabel("Print (the whole mix)")).toBeChecked();
    await page.getByLabel("Chain", { exact: true }).selectOption({ label: `${TEMPLATE} · rev 1 (template)` });
    await page.getByRole("button", { name: "Render", exact: true }).click();
    await expect(page.getByRole("heading", { level: 1, name: "Print of v1" })).toBeVisible();
    await expect(page.getByTestId("render-state")).toHaveAttribute("data-state", "done", { timeout: 120_000 });
    const downloadPromise = page.waitForEvent("download");
    await page.getByRole("link", { name: "Download print (WAV)" }).click();
    const download = await downloadPromise;
    expect(download.suggestedFilename()).toMatch(/^Estuary Light .+ - 01 Estuary Light - v1 print [0-9a-f]{8}\.wav$/);
    const printPath = path.join(scratch, "print.wav");
    await download.saveAs(printPath);

    const format = await probeWav(printPath);
    expect(format.channels).toBe(2);
    expect(format.frames).toBeGreaterThan(9 * format.sampleRate);
    const analysis = await analyzeFile(printPath);
    const ceilingDbtp = gentleMaster.stages.find((s) => s.type === "limit")!.ceilingDbtp as number;
    // The mix itself peaks over the ceiling, so the print's peak says the limiter held it.
    expect((await analyzeFile(mixPath)).truePeakDbtp).toBeGreaterThan(ceilingDbtp);
    expect(analysis.truePeakDbtp).toBeLessThanOrEqual(ceilingDbtp + 1e-9);
    expect(analysis.integratedLufs).toBeGreaterThan(-40);

    // The track page lists both renders, done.
    await page.getByRole("link", { name: "← Estuary Light" }).click();
    const renders = page.getByRole("table", { name: "Renders" });
    await expect(renders.locator("tbody tr")).toHaveCount(2);
    await expect(renders).toContainText("Print");
    await expect(renders).toContainText("Preview");
  } finally {
    rmSync(scratch, { recursive: true, force: true });
  }
});
