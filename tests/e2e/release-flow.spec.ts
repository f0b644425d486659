// The first user flow, in Chromium against the production build: an engineer
// creates a release with two tracks; the client sees only their own releases.
import { mkdirSync } from "node:fs";
import { expect, test, type Page } from "@playwright/test";
import { DEMO_OWNER, signIn } from "./demo-sign-in.ts";

const ENGINEER = "engineer@lanternquay.test";
const ARTIST = "mirelle@quane.test";

async function signOut(page: Page) {
  await page.getByRole("button", { name: "Sign out" }).click();
  await expect(page).toHaveURL(/\/sign-in$/);
}

test("an engineer creates a release with two tracks; the client sees only their own", async ({ page }, testInfo) => {
  const title = `Harbour Lights ${Date.now().toString(36)}`;

  await signIn(page, ENGINEER);
  // Remember another client's release, to try it as the artist later.
  const otherRelease = page.getByRole("table", { name: "Releases" }).getByRole("link", { name: "Glasshouse Signal" });
  const otherHref = await otherRelease.getAttribute("href");
  expect(otherHref).toMatch(/^\/releases\/[0-9a-f-]{36}$/);

  await page.getByRole("link", { name: "New release" }).click();
  // A validation error first: the title stays empty, the other values survive.
  await page.getByLabel("Kind").selectOption({ label: "EP" });
  await page.getByLabel("Client").selectOption({ label: "Mirelle Quane" });
  await page.getByRole("button", { name: "Create release" }).click();
  await expect(page.getByText("Give the release a title")).toBeVisible();
  await expect(page.getByLabel("Client")).toHaveValue(/[0-9a-f-]{36}/);
  await page.getByLabel("Title").fill(title);
  await page.getByRole("button", { name: "Create release" }).click();
  await expect(page.getByRole("heading", { level: 1, name: title })).toBeVisible();

  for (const [position, trackTitle, isrc] of [
    ["1", "Breakwater", "ZZ-TDM-27-00101"],
    ["2", "Night Ferry Home", ""],
  ]) {
    await page.getByRole("link", { name: "Add track" }).click();
    await expect(page.getByLabel("Position")).toHaveValue(position);
    await page.getByLabel("Title").fill(trackTitle);
    await page.getByLabel("ISRC").fill(isrc);
    await page.getByRole("button", { name: "Add track" }).click();
    await expect(page.getByRole("heading", { level: 1, name: title })).toBeVisible();
  }
  const tracks = page.getByRole("table", { name: "Tracks", exact: true });
  await expect(tracks.getByRole("row")).toHaveCount(3);
  await expect(tracks.getByRole("row").nth(1)).toContainText("Breakwater");
  await expect(tracks.getByRole("row").nth(1)).toContainText("ZZ-TDM-27-00101");
  await expect(tracks.getByRole("row").nth(2)).toContainText("Night Ferry Home");
  await signOut(page);

  await signIn(page, ARTIST);
  const releases = page.getByRole("table", { name: "Releases" });
  await expect(releases.getByRole("link", { name: title })).toBeVisible();
  await expect(releases.getByRole("link", { name: "Lowlight Weather" })).toBeVisible();
  await expect(releases.getByRole("link", { name: "Glasshouse Signal" })).toHaveCount(0);
  await expect(releases.getByRole("columnheader", { name: "Client" })).toHaveCount(0);
  await expect(releases.locator("tbody tr").filter({ hasText: title })).toContainText("2 tracks");

  mkdirSync("tests/artifacts", { recursive: true });
  const shot = await page.screenshot({ path: "tests/artifacts/dashboard.png", fullPage: true });
  await testInfo.attach("dashboard", { body: shot, contentType: "image/png" });

  // Another client's release does not exist as far as this client can tell.
  const response = await page.goto(otherHref as string);
  expect(response?.status()).toBe(404);
  await expect(page.getByRole("heading", { name: "Not found" })).toBeVisible();
  await page.goto("/");
  await signOut(page);
});

test("a wrong password and an unknown e-mail read the same", async ({ page }) => {
  const messages: string[] = [];
  for (const email of [ENGINEER, `nobody-${Date.now()}@lanternquay.test`]) {
    await page.goto("/sign-in");
    await page.getByLabel("E-mail").fill(email);
    await page.getByLabel("Password").fill("not-the-password");
    await page.getByRole("button", { name: "Sign in" }).click();
    const alert = page.getByRole("alert");
    await expect(alert).toBeVisible();
    messages.push((await alert.textContent()) ?? "");
    await expect(page.getByLabel("E-mail")).toHaveValue(email);
  }
  expect(messages[0]).toBe(messages[1]);
});

test.describe("at phone width", () => {
  test.use({ viewport: { width: 375, height: 740 } });

  test("no page scrolls sideways", async ({ page }) => {
    await signIn(page, DEMO_OWNER);
    await page.getByRole("link", { name: "Lowlight Weather", exact: true }).click();
    await expect(page.getByRole("heading", { level: 1, name: "Lowlight Weather" })).toBeVisible();
    const releasePath = new URL(page.url()).pathname;
    await page.getByRole("link", { name: "Cartographer" }).click();
    await expect(page.getByRole("heading", { level: 1, name: "Cartographer" })).toBeVisible();
    const trackPath = new URL(page.url()).pathname;
    for (const path of ["/", "/releases", "/releases/new", releasePath, `${releasePath}/edit`, `${releasePath}/tracks/new`, trackPath, `${trackPath}/edit`, "/team", "/settings"]) {
      await page.goto(path);
      const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
      expect(overflow, `${path} is wider than the phone`).toBeLessThanOrEqual(0);
    }
    await page.getByRole("button", { name: "Sign out" }).click();
    const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
    expect(overflow, "/sign-in is wider than the phone").toBeLessThanOrEqual(0);
  });
});
