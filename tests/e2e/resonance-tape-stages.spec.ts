// The resonance and tape stages in Chromium against the production build and
// the demo seed: an engineer starts a chain from the "Warm and even"
// template, finds both stages with their values, meets a field error for a
// cut beyond range, switches the resonance stage to hear what it removes,
// saves revision 2 and reads the diff; a print of that revision is refused
// with the message beside the chain, and the page fits a phone.
import { mkdirSync } from "node:fs";
import { expect as baseExpect, test, type Page } from "@playwright/test";
import { DEMO_ENGINEER, DEMO_PASSWORD } from "./demo-sign-in.ts";

// The machine that runs these may be shared and slow: a longer wait than the default 5 s.
const expect = baseExpect.configure({ timeout: 20_000 });

async function signIn(page: Page, email: string) {
  await page.goto("/sign-in");
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill(DEMO_PASSWORD);
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByRole("navigation", { name: "Main" })).toBeVisible();
}

async function openDemoTrack(page: Page) {
  await page.getByRole("table", { name: "Releases" }).getByRole("link", { name: "Lowlight Weather" }).click();
  await page.getByRole("table", { name: "Tracks", exact: true }).getByRole("link", { name: "Slow Ferry", exact: true }).click();
  await expect(page.getByRole("heading", { level: 1, name: "Slow Ferry" })).toBeVisible();
}

test("an engineer sets the resonance stage to hear what it removes, saves, and a print of it is refused", async ({ page }, testInfo) => {
  const name = `Slow Ferry warm ${Date.now().toString(36)}`;
  await signIn(page, DEMO_ENGINEER);
  await openDemoTrack(page);
  await page.getByRole("link", { name: "New chain from template" }).click();
  await page.getByLabel("Name").fill(name);
  await page.getByLabel("Start from").selectOption({ label: "Template: Warm and even" });
  await page.getByRole("button", { name: "Create chain" }).click();
  await expect(page.getByRole("heading", { level: 1, name })).toBeVisible();

  // At the desk a stage's fields show once its strip is selected.
  const tape = page.getByRole("listitem", { name: "Stage 2: Tape colour" });
  await tape.getByRole("button", { name: /Tape colour/ }).click();
  await expect(tape.getByLabel("Drive (dB)")).toHaveValue("3");
  await expect(tape.getByLabel("Bump frequency (Hz)")).toHaveValue("65");
  await expect(tape.getByLabel("High-frequency loss (Hz)")).toHaveValue("19000");
  const resonance = page.getByRole("listitem", { name: "Stage 3: Resonance taming" });
  await resonance.getByRole("button", { name: /Resonance taming/ }).click();
  await expect(resonance.getByLabel("Focus from (Hz)")).toHaveValue("1500");
  await expect(resonance.getByLabel("Peak threshold (dB)")).toHaveValue("6");
  const cut = resonance.getByLabel("Deepest cut (dB)");
  await expect(cut).toHaveValue("3");

  await cut.fill("30");
  await page.getByRole("button", { name: "Save as revision" }).click();
  await expect(resonance.getByRole("alert")).toHaveText("must be at most 24");
  await expect(cut).toHaveAttribute("aria-invalid", "true");

  await cut.fill("4");
  await resonance.getByLabel("Listen to").selectOption({ label: "Removed only" });
  await expect(resonance.getByTestId("listen-removed-note")).toContainText("a print of this revision will be refused");
  await page.getByRole("button", { name: "Save as revision" }).click();
  await expect(page.getByRole("status").filter({ hasText: "Saved as revision" })).toContainText("Saved as revision 2");
  const changes = page.getByRole("list", { name: "Changes" });
  await expect(changes.getByRole("listitem")).toHaveCount(2);
  await expect(changes).toContainText("Stage 3 (Resonance taming) · Deepest cut");
  await expect(changes).toContainText("3 dB → 4 dB");
  await expect(changes).toContainText("Stage 3 (Resonance taming) · Listen to");
  await expect(changes).toContainText("output → removed");

  mkdirSync("tests/artifacts", { recursive: true });
  const shot = await page.screenshot({ path: "tests/artifacts/resonance-tape-editor.png", fullPage: true });
  await testInfo.attach("resonance and tape stages", { body: shot, contentType: "image/png" });

  // A print of revision 2 is refused, with the reason beside the chain.
  const chainUrl = page.url();
  await page.getByRole("link", { name: "← Lowlight Weather · Slow Ferry" }).click();
  await page.getByRole("link", { name: "New render" }).first().click();
  await page.getByLabel("Chain", { exact: true }).selectOption({ label: `${name} · rev 2` });
  await page.getByLabel("Print (the whole mix)").check();
  await page.getByRole("button", { name: "Render" }).click();
  await expect(page.getByText(/Stage 3 \(resonance\) listens to what it removes/)).toBeVisible();
  const refused = await page.screenshot({ path: "tests/artifacts/print-refused-removed.png", fullPage: true });
  await testInfo.attach("print refused", { body: refused, contentType: "image/png" });

  // A phone: the editor does not scroll sideways.
  await page.setViewportSize({ width: 375, height: 740 });
  await page.goto(chainUrl);
  await expect(page.getByRole("heading", { level: 1, name })).toBeVisible();
  const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
  expect(overflow).toBeLessThanOrEqual(0);
  const phone = await page.screenshot({ path: "tests/artifacts/resonance-tape-editor-375.png", fullPage: true });
  await testInfo.attach("phone", { body: phone, contentType: "image/png" });
});
