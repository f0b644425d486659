// The listening desk in Chromium against the production build and the demo
// seed: an engineer opens a track, opens its chain at the desk in one click,
// presses Listen and confirms a safe level, watches the momentary loudness
// move, bypasses the compressor (its gain reduction reads 0.0 dB), pushes
// the limiter (its gain reduction grows) and releases it, lowers a multiband
// threshold with the arrow keys, saves a revision, and finds the saved
// parameters equal to what the desk shows. Screenshots at 1280 and 375 px.
import { mkdirSync } from "node:fs";
import { expect, test, type Locator, type Page } from "@playwright/test";
import { DEMO_ENGINEER, signIn } from "./demo-sign-in.ts";

// The AudioContext must start without a real gesture in headless Chromium.
test.use({
  launchOptions: {
    executablePath: process.env.CHROMIUM_PATH ?? "/usr/bin/chromium",
    args: ["--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--autoplay-policy=no-user-gesture-required"],
  },
  viewport: { width: 1280, height: 900 },
});

const TRACK = "Cartographer";

/** The number in a reading such as "2.4 dB" or "-14.1 LUFS" (NaN for "–∞"). */
async function reading(locator: Locator): Promise<number> {
  return Number.parseFloat((await locator.textContent()) ?? "");
}

async function openTrack(page: Page) {
  await page.getByRole("table", { name: "Releases" }).getByRole("link", { name: "Lowlight Weather" }).click();
  await page.getByRole("table", { name: "Tracks", exact: true }).getByRole("link", { name: TRACK, exact: true }).click();
  await expect(page.getByRole("heading", { level: 1, name: TRACK })).toBeVisible();
}

test("an engineer listens at the desk, bypasses, pushes, edits and saves exactly what was heard", async ({ page }, testInfo) => {
  test.setTimeout(300_000);
  await signIn(page, DEMO_ENGINEER);
  await openTrack(page);

  // One click from the track to the desk.
  await page.getByRole("list", { name: "Chains of this track" }).getByRole("link", { name: /Open .* at the desk/ }).first().click();
  await expect(page.getByTestId("desk")).toBeVisible({ timeout: 20_000 });
  const chainId = await page.getByTestId("chain-id").inputValue();
  await expect(page.getByTestId("monitoring-reminder")).toBeVisible();

  // Listen: the safe-level confirmation comes first.
  await page.getByRole("button", { name: "Listen", exact: true }).click();
  await expect(page.getByTestId("monitoring-notice")).toBeVisible();
  await page.getByRole("button", { name: "My level is safe — play" }).click();
  await expect(page.getByRole("button", { name: "Pause", exact: true })).toBeVisible({ timeout: 60_000 });

  // The momentary loudness reads a level and keeps moving while it plays.
  const momentary = page.getByTestId("meter-momentary");
  await expect(momentary).toHaveText(/^-?\d+\.\d LUFS$/, { timeout: 30_000 });
  const first = await momentary.textContent();
  await expect(momentary).not.toHaveText(first ?? "", { timeout: 30_000 });

  // Bypass the compressor: its gain reduction reads 0.0 dB.
  const compressor = page.getByRole("listitem", { name: "Stage 2: Compressor" });
  const bypass = compressor.getByRole("button", { name: "Bypass stage 2" });
  // (A database kept between runs may hold a revision saved with it bypassed: engage it first.)
  if ((await bypass.getAttribute("aria-pressed")) === "true") await bypass.click();
  await expect(bypass).toHaveAttribute("aria-pressed", "false");
  await bypass.click();
  await expect(bypass).toHaveAttribute("aria-pressed", "true");
  await expect(page.getByTestId("gr-1")).toHaveText("0.0 dB", { timeout: 20_000 });

  // Push the limiter (held): its gain reduction grows; released, Push is off again.
  const limiter = page.getByRole("listitem", { name: "Stage 4: Limiter" });
  const limiterGr = page.getByTestId("gr-3");
  await page.waitForTimeout(1_500);
  const before = await reading(limiterGr);
  const push = limiter.getByRole("button", { name: "Push stage 4" });
  const box = (await push.boundingBox())!;
  await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2);
  await page.mouse.down();
  await expect(push).toHaveAttribute("aria-pressed", "true");
  await expect.poll(() => reading(limiterGr), { timeout: 30_000 }).toBeGreaterThan(before + 1);
  // Hold it a moment longer than a tap, so releasing ends the push.
  await page.waitForTimeout(400);
  await page.mouse.up();
  await expect(push).toHaveAttribute("aria-pressed", "false");

  // A multiband threshold, nudged with the arrow keys while it plays.
  const multiband = page.getByRole("listitem", { name: "Stage 3: Multiband compressor" });
  await multiband.getByRole("button", { name: /Multiband compressor/ }).click();
  const threshold = multiband.getByRole("group", { name: "Band 2" }).getByRole("spinbutton", { name: "Threshold (dB)" });
  const thresholdBefore = Number(await threshold.inputValue());
  await threshold.focus();
  for (let i = 0; i < 6; i++) await page.keyboard.press("ArrowDown");
  await page.keyboard.press("Shift+ArrowDown");
  const thresholdAfter = Math.round((thresholdBefore - 3.05) * 100) / 100;
  await expect(threshold).toHaveValue(String(thresholdAfter));

  mkdirSync("tests/artifacts", { recursive: true });
  const wide = await page.screenshot({ path: "tests/artifacts/desk-1280.png", fullPage: true });
  await testInfo.attach("desk at 1280 px", { body: wide, contentType: "image/png" });

  // Save: what the desk shows is what the revision holds.
  await page.getByRole("button", { name: "Save as revision" }).click();
  await expect(page.getByRole("status").filter({ hasText: /Saved as revision \d+/ })).toBeVisible({ timeout: 30_000 });
  const savedNumber = Number((await page.getByRole("status").filter({ hasText: /Saved as revision/ }).textContent())!.match(/\d+/)![0]);
  const shown: Record<string, string> = {};
  for (const field of await page.locator("[data-param=true]").all()) shown[(await field.getAttribute("data-path"))!] = await field.inputValue();
  expect(Object.keys(shown).length).toBeGreaterThan(20);
  const response = await page.request.get(`/api/chains/${chainId}/revisions`);
  expect(response.ok()).toBe(true);
  const { revisions } = (await response.json()) as { revisions: { revision: number; params: unknown }[] };
  const saved = revisions.find((r) => r.revision === savedNumber)!.params as { stages: Record<string, unknown>[] };
  const at = (path: string) => path.match(/[^.[\]]+/g)!.reduce<unknown>((node, key) => (node as Record<string, unknown>)[key], saved);
  for (const [path, value] of Object.entries(shown)) expect({ path, value: Number(at(path)) }).toEqual({ path, value: Number(value) });
  expect(at("stages[2].bands[1].thresholdDb")).toBe(thresholdAfter);
  expect(saved.stages[1].bypass).toBe(true);
  expect(saved.stages[3].bypass).toBe(false);

  // A phone: the desk stacks without sideways scrolling.
  await page.getByRole("button", { name: "Pause", exact: true }).click();
  await page.setViewportSize({ width: 375, height: 800 });
  await expect(page.getByTestId("desk")).toBeVisible();
  const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
  expect(overflow).toBeLessThanOrEqual(0);
  const narrow = await page.screenshot({ path: "tests/artifacts/desk-375.png", fullPage: true });
  await testInfo.attach("desk at 375 px", { body: narrow, contentType: "image/png" });
});

test("the desk's keys, a soloed band asking before a save, a preview from the desk and settings compared live", async ({ page }) => {
  test.setTimeout(300_000);
  await signIn(page, DEMO_ENGINEER);
  await page.getByRole("table", { name: "Releases" }).getByRole("link", { name: "Lowlight Weather" }).click();
  await page.getByRole("table", { name: "Tracks", exact: true }).getByRole("link", { name: "Tin Roof Morning", exact: true }).click();
  await page.getByRole("list", { name: "Chains of this track" }).getByRole("link", { name: /Open .* at the desk/ }).first().click();
  await expect(page.getByTestId("desk")).toBeVisible({ timeout: 20_000 });
  // The default region is the loudest 30 s of this 44 s mix, as previews choose it.
  await expect(page.getByText(/Looping 0:0\d\.\d–0:\d\d\.\d of mix v1 \(the loudest 30 s\)/)).toBeVisible();

  // Keys: ] selects the next stage, B bypasses it, [ goes back.
  const strip = (n: number) => page.locator(`li[data-stage="${n}"]`);
  await page.locator("body").click({ position: { x: 5, y: 5 } });
  await page.keyboard.press("]");
  await expect(strip(1)).toHaveAttribute("data-selected", "true");
  await page.keyboard.press("b");
  await expect(page.getByTestId("bypass-1")).toHaveAttribute("aria-pressed", "true");
  await page.keyboard.press("b");
  await expect(page.getByTestId("bypass-1")).toHaveAttribute("aria-pressed", "false");
  // P tapped latches Push on the selected stage; tapped again, it lets go.
  await page.keyboard.press("p");
  await expect(strip(1).getByRole("button", { name: "Push stage 2" })).toHaveAttribute("aria-pressed", "true");
  await page.keyboard.press("p");
  await expect(strip(1).getByRole("button", { name: "Push stage 2" })).toHaveAttribute("aria-pressed", "false");
  await page.keyboard.press("]");
  await expect(strip(2)).toHaveAttribute("data-selected", "true");

  // Compare settings against revision 1 while listening.
  await page.getByRole("button", { name: "Listen", exact: true }).click();
  const notice = page.getByTestId("monitoring-notice");
  if (await notice.isVisible()) await page.getByRole("button", { name: "My level is safe — play" }).click();
  await expect(page.getByRole("button", { name: "Pause", exact: true })).toBeVisible({ timeout: 60_000 });
  await page.getByLabel("Compare with revision").selectOption({ label: "Revision 1" });
  await page.getByRole("button", { name: "Listen to revision 1" }).click();
  await expect(page.getByRole("button", { name: "Listen to revision 1" })).toHaveAttribute("aria-pressed", "true");
  await page.getByRole("button", { name: "Listen to the current settings" }).click();
  await expect(page.getByRole("button", { name: "Listen to the current settings" })).toHaveAttribute("aria-pressed", "true");
  await page.getByRole("button", { name: "Pause", exact: true }).click();

  // A soloed band asks before it is saved; released, the revision has no solo.
  const band3 = strip(2).getByRole("group", { name: "Band 3" });
  await band3.getByRole("button", { name: "Solo band 3" }).click();
  await page.getByRole("button", { name: "Save as revision" }).click();
  const question = page.getByRole("alertdialog").filter({ hasText: "soloed" });
  await expect(question).toContainText("Stage 3 band 3 is soloed");
  await question.getByRole("button", { name: "Release solo and save" }).click();
  await expect(page.getByRole("status").filter({ hasText: /Saved as revision \d+/ })).toBeVisible({ timeout: 30_000 });
  await expect(band3.getByRole("button", { name: "Solo band 3" })).toHaveAttribute("aria-pressed", "false");

  // A preview of the desk's region, queued from the same settings (no new revision).
  await page.getByRole("button", { name: "Render preview" }).click();
  const queued = page.getByRole("status").filter({ hasText: /Preview of revision \d+ queued/ });
  await expect(queued).toBeVisible({ timeout: 30_000 });
  await expect(queued).not.toContainText("saved for it");
  await queued.getByRole("link", { name: "follow it" }).click();
  await expect(page.getByRole("heading", { level: 1 })).toBeVisible();
  await expect(page).toHaveURL(/\/renders\/[0-9a-f-]{36}$/);
});
