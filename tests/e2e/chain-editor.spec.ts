// Making a chain in Chromium against the production build and the demo
// seed: an engineer starts a chain from the gentle template on a demo track,
// lands at its desk, meets a field error for an out-of-range ratio (the value
// stays), saves a second revision and reads the diff; the page fits a phone.
import { mkdirSync } from "node:fs";
import { expect, test, type Page } from "@playwright/test";
import { signIn } from "./demo-sign-in.ts";

const ENGINEER = "engineer@lanternquay.test";

async function openDemoTrack(page: Page) {
  await page.getByRole("table", { name: "Releases" }).getByRole("link", { name: "Lowlight Weather" }).click();
  await page.getByRole("table", { name: "Tracks", exact: true }).getByRole("link", { name: "Slow Ferry", exact: true }).click();
  await expect(page.getByRole("heading", { level: 1, name: "Slow Ferry" })).toBeVisible();
}

test("an engineer makes a chain from the gentle template, meets a field error, saves revision 2 and sees the diff", async ({ page }, testInfo) => {
  const name = `Slow Ferry master ${Date.now().toString(36)}`;
  await signIn(page, ENGINEER);
  await openDemoTrack(page);
  await page.getByRole("link", { name: "New chain from template" }).click();
  await page.getByLabel("Name").fill(name);
  await page.getByLabel("Start from").selectOption({ label: "Template: Gentle master" });
  await page.getByRole("button", { name: "Create chain" }).click();

  await expect(page.getByRole("heading", { level: 1, name })).toBeVisible();
  const bus = page.getByRole("listitem", { name: "Stage 2: Compressor" });
  await expect(bus).toBeVisible();
  await bus.getByRole("button", { name: /Compressor/ }).click();
  const ratio = bus.getByLabel("Ratio (:1)");
  await expect(ratio).toHaveValue("1.8");
  // The multiband stage shows its four bands split at 90 Hz, 1 kHz and 3 kHz.
  const multiband = page.getByRole("listitem", { name: "Stage 3: Multiband compressor" });
  await multiband.getByRole("button", { name: /Multiband compressor/ }).click();
  await expect(multiband.getByLabel("Crossover 1 (Hz)")).toHaveValue("90");
  await expect(multiband.getByLabel("Crossover 3 (Hz)")).toHaveValue("3000");
  await expect(multiband.getByRole("group", { name: "Band 4" })).toBeVisible();

  await bus.getByRole("button", { name: /Compressor/ }).click();
  // Out of range: the desk marks it at once, the server refuses, the error sits beside the field, the value stays.
  await ratio.fill("40");
  await page.getByRole("button", { name: "Save as revision" }).click();
  await expect(bus.getByRole("alert")).toHaveText("must be at most 20");
  await expect(ratio).toHaveAttribute("aria-invalid", "true");
  await expect(ratio).toHaveValue("40");
  await expect(page.getByText("Revision 2")).toHaveCount(0);

  await ratio.fill("2.2");
  await page.getByRole("button", { name: "Save as revision" }).click();
  await expect(page.getByRole("status").filter({ hasText: "Saved as revision" })).toContainText("Saved as revision 2");
  const changes = page.getByRole("list", { name: "Changes" });
  await expect(changes.getByRole("listitem")).toHaveCount(1);
  await expect(changes.getByRole("listitem").first()).toContainText("Stage 2 (Compressor) · Ratio");
  await expect(changes.getByRole("listitem").first()).toContainText("1.8:1 → 2.2:1");
  await expect(page.getByRole("listitem", { name: "Stage 2: Compressor" }).getByLabel("Ratio (:1)")).toHaveValue("2.2");
  await expect(page.getByRole("link", { name: "Open at the desk" })).toHaveCount(1);

  mkdirSync("tests/artifacts", { recursive: true });
  const shot = await page.screenshot({ path: "tests/artifacts/chain-editor.png", fullPage: true });
  await testInfo.attach("chain editor", { body: shot, contentType: "image/png" });

  // A phone: no sideways scrolling.
  await page.setViewportSize({ width: 375, height: 740 });
  await page.reload();
  await expect(page.getByRole("heading", { level: 1, name })).toBeVisible();
  const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
  expect(overflow).toBeLessThanOrEqual(0);
});
