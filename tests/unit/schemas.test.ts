import { describe, expect, it } from "vitest";
import { formatIsrc, trackSchema } from "../../app/schemas/track.ts";
import { releaseSchema } from "../../app/schemas/release.ts";
import { invitationSchema } from "../../app/schemas/team.ts";
import { safeRedirectPath } from "../../app/lib/redirect.ts";
import { parseForm } from "../../app/lib/forms.ts";

describe("ISRC", () => {
  it("accepts the display form, surrounding spaces and lower case, and stores 12 characters", () => {
    expect(trackSchema.parse({ title: "A", position: "3", isrc: " zz-tdm-26-00001 " }).isrc).toBe("ZZTDM2600001");
    expect(formatIsrc("ZZTDM2600001")).toBe("ZZ-TDM-26-00001");
    expect(trackSchema.parse({ title: "A", position: "3", isrc: "zz-tdm-26-00001" })).toEqual({ title: "A", position: 3, isrc: "ZZTDM2600001" });
    expect(trackSchema.parse({ title: "A", position: "3", isrc: "" }).isrc).toBeNull();
  });

  it("rejects a wrong length and letters where the designation code has digits", () => {
    expect(trackSchema.safeParse({ title: "A", position: "1", isrc: "ZZTDM260001" }).success).toBe(false);
    expect(trackSchema.safeParse({ title: "A", position: "1", isrc: "ZZTDM26000A1" }).success).toBe(false);
  });

  it("gives the delivery rule's specific message (dsp/delivery/isrc.ts is the one owner)", () => {
    const result = trackSchema.safeParse({ title: "A", position: "1", isrc: "ZZ-TDM26-00001" });
    expect(result.success).toBe(false);
    expect(result.error?.issues[0]?.message).toMatch(/CC-XXX-YY-NNNNN/);
  });
});

describe("release schema", () => {
  it("treats an empty due date as none and defaults the status", () => {
    const parsed = releaseSchema.parse({ title: " Quiet Hours ", kind: "album", clientId: "1b4e28ba-2fa1-41d2-883f-0016d3cca427", dueOn: "" });
    expect(parsed).toEqual({ title: "Quiet Hours", kind: "album", clientId: "1b4e28ba-2fa1-41d2-883f-0016d3cca427", status: "intake", dueOn: null });
  });
});

describe("invitation schema", () => {
  it("drops a client for an engineer and requires one for a client", () => {
    expect(invitationSchema.parse({ email: "a@b.test", role: "engineer", clientId: "1b4e28ba-2fa1-41d2-883f-0016d3cca427" }).clientId).toBeNull();
    const form = new FormData();
    form.set("email", "a@b.test");
    form.set("role", "client");
    const result = parseForm(invitationSchema, form);
    expect(result).toEqual({ ok: false, errors: { clientId: "Choose which client this person belongs to" }, values: { email: "a@b.test", role: "client" } });
  });
});

describe("safeRedirectPath", () => {
  it("keeps same-site paths and replaces anything else with the fallback", () => {
    expect(safeRedirectPath("/releases?status=review")).toBe("/releases?status=review");
    for (const bad of ["https://elsewhere.test/", "//elsewhere.test", "/\\elsewhere.test", "releases", null, undefined]) {
      expect(safeRedirectPath(bad)).toBe("/");
    }
  });
});
