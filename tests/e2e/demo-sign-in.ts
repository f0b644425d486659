// The demo accounts (db/seeds/01_demo.ts) and signing in as one of them.
import { expect, type Page } from "@playwright/test";

export const DEMO_PASSWORD = "tidemark-demo";
export const DEMO_OWNER = "owner@lanternquay.test";
export const DEMO_ENGINEER = "engineer@lanternquay.test";
export const DEMO_ARTIST = "mirelle@quane.test";

export async function signIn(page: Page, email: string): Promise<void> {
  await page.goto("/sign-in");
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill(DEMO_PASSWORD);
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByRole("navigation", { name: "Main" })).toBeVisible();
}
