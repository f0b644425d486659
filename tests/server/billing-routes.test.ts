// The invoice resource route: only the owner builds, sends and voids; a
// client of the release (or staff) opens the hosted payment page; others get
// a 404. Runs the route's action with real sessions, the real database and
// the local payment fake.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startPaymentsFake, type PaymentsFake } from "../../scripts/fakes/payments.ts";
import { db } from "../../app/lib/db.server.ts";
import { action } from "../../app/routes/release-invoice.ts";
import { action as settingsAction } from "../../app/routes/studio-billing.ts";
import { formatCents, parseMoneyCents } from "../../app/lib/billing/settings-form.ts";
import { getStudioSettings, saveStudioSettings } from "../../app/models/studio-settings.server.ts";
import { getInvoiceForRelease } from "../../app/models/invoice.server.ts";
import { createFixture, dataOf, destroyFixture, outcomeOf, requestAs, type Fixture, type Persona } from "./fixtures.ts";

let fixture: Fixture;
let fake: PaymentsFake;

beforeAll(async () => {
  fixture = await createFixture();
  await saveStudioSettings(fixture.studioId, { trackRateCents: 12_345 });
  fake = await startPaymentsFake({ port: 0, webhookUrl: "http://127.0.0.1:9/unused" });
  // The app's shared payments client is made on first use, from these.
  Object.assign(process.env, { STRIPE_API_HOST: "127.0.0.1", STRIPE_API_PORT: String(fake.port), STRIPE_API_PROTOCOL: "http" });
});

afterAll(async () => {
  if (fixture) await db("outbox_emails").where({ studio_id: fixture.studioId }).delete();
  await destroyFixture(fixture);
  await fake?.close();
  await db.destroy();
});

const run = (persona: Persona, intent: string, releaseId = fixture.releaseId) =>
  action({ request: requestAs(fixture, persona, `/releases/${releaseId}/invoice`, { form: { intent } }), params: { releaseId } });

async function location(persona: Persona, intent: string) {
  const res = (await run(persona, intent)) as Response;
  expect(res.status).toBe(302);
  return res.headers.get("Location")!;
}

describe("the invoice route", () => {
  it("lets only the owner build, send and void", async () => {
    for (const persona of ["engineer", "client", "otherClient", "otherStudio"] as const) {
      expect(await outcomeOf(() => run(persona, "build")), persona).toBe("404");
    }
    expect(await outcomeOf(() => run("signedOut", "build"))).toBe("sign-in");
    expect(await getInvoiceForRelease(fixture.releaseId)).toBeUndefined();

    expect(await location("owner", "build")).toBe(`/releases/${fixture.releaseId}#invoice`);
    expect(await getInvoiceForRelease(fixture.releaseId)).toMatchObject({ state: "draft", totalCents: 12_345 });
    expect(await outcomeOf(() => run("client", "send"))).toBe("404");
    // Paying a draft is refused with a message on the release page.
    expect(await location("client", "pay")).toMatch(/\?invoiceError=not-payable#invoice$/);
    await location("owner", "send");
    expect((await getInvoiceForRelease(fixture.releaseId))!.state).toBe("sent");
  });

  it("sends the release's client to the hosted payment page; another client gets a 404", async () => {
    expect(await outcomeOf(() => run("otherClient", "pay"))).toBe("404");
    const url = await location("client", "pay");
    expect(url).toMatch(new RegExp(`^${fake.url}/pay/cs_test_`));
    const invoice = (await getInvoiceForRelease(fixture.releaseId))!;
    expect(url).toBe(`${fake.url}/pay/${invoice.checkoutSessionIds.at(-1)}`);
    const page = await fetch(url).then((r) => r.text());
    expect(page).toContain("€123.45");
    expect(((await run("owner", "bogus")) as Response).status).toBe(400);
  });

  it("voids a sent invoice; the release can then be billed again", async () => {
    await location("owner", "void");
    expect(await getInvoiceForRelease(fixture.releaseId)).toBeUndefined();
    await location("owner", "build");
    expect((await getInvoiceForRelease(fixture.releaseId))!.state).toBe("draft");
  });
});

describe("the billing settings route", () => {
  const save = (persona: Persona, form: Record<string, string>) => settingsAction({ request: requestAs(fixture, persona, "/settings/billing", { form }) });
  const good = { currency: "gbp", trackRate: "180", revisionRate: "45.5", references: "Streaming reference: -14\nNight listening: -18.5\n" };

  it("reads money as exact cents", () => {
    expect(parseMoneyCents("250")).toBe(25_000);
    expect(parseMoneyCents("0.07")).toBe(7);
    expect(parseMoneyCents("19.9")).toBe(1_990);
    expect(() => parseMoneyCents("1.234")).toThrow();
    expect(() => parseMoneyCents("-1")).toThrow();
    expect(formatCents(4_550)).toBe("45.50");
  });

  it("lets the owner save rates and reference levels; others get a 404", async () => {
    expect(await outcomeOf(() => save("engineer", good))).toBe("404");
    expect(await outcomeOf(() => save("client", good))).toBe("404");
    const res = (await save("owner", good)) as Response;
    expect(res.headers.get("Location")).toBe("/settings#billing");
    expect(await getStudioSettings(fixture.studioId)).toMatchObject({
      currency: "GBP",
      trackRateCents: 18_000,
      revisionRateCents: 4_550,
      normalisationReferences: [
        { name: "Streaming reference", lufs: -14 },
        { name: "Night listening", lufs: -18.5 },
      ],
    });
  });

  it("answers field errors with 400 and saves nothing", async () => {
    const before = await getStudioSettings(fixture.studioId);
    const bad = dataOf<{ errors: Record<string, string> }>(await save("owner", { ...good, trackRate: "12,50", references: "No level here" }));
    expect(bad.status).toBe(400);
    expect(bad.body.errors.trackRate).toMatch(/250\.50/);
    expect(bad.body.errors.references).toMatch(/Line 1/);
    const twice = dataOf<{ errors: Record<string, string> }>(await save("owner", { ...good, references: "A: -14\na: -16" }));
    expect(twice.status).toBe(400);
    expect(twice.body.errors.references).toMatch(/twice/);
    expect(await getStudioSettings(fixture.studioId)).toEqual(before);
  });
});
