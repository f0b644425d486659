// ISO 3901 structure. Codes are invented (country ZZ, or XA / AA from the ISO 3166
// user-assigned range that is never allocated; registrant TDM...):
// none belongs to a real registrant.
import { describe, expect, it } from "vitest";
import { formatIsrc, normaliseIsrc, parseIsrc } from "./isrc.ts";

describe("ISRC", () => {
  it("accepts the compact and display forms, any case, and normalises to compact uppercase", () => {
    expect(normaliseIsrc("ZZTDM2600001")).toBe("ZZTDM2600001");
    expect(normaliseIsrc("ZZ-TDM-26-00001")).toBe("ZZTDM2600001");
    expect(normaliseIsrc("zz-tdm-26-00001")).toBe("ZZTDM2600001");
    expect(normaliseIsrc("  xax9a2599999 ")).toBe("XAX9A2599999");
    expect(normaliseIsrc("AA0002600042")).toBe("AA0002600042"); // registrant may be all digits
    expect(formatIsrc("zztdm2600001")).toBe("ZZ-TDM-26-00001");
  });

  const rejects: [string, RegExp][] = [
    ["", /12 characters \(got 0\)/],
    ["ZZTDM260001", /12 characters \(got 11\)/],
    ["ZZTDM26000012", /12 characters \(got 13\)/],
    ["Z1TDM2600001", /country code/],
    ["12TDM2600001", /country code/],
    ["ZZTDMA600001", /year of reference/],
    ["ZZTDM26A0001", /designation code/],
    ["ZZTDM260000X", /designation code/],
    ["ZZ TDM 26 00001", /only letters, digits/],
    ["ZZ_TDM2600001", /only letters, digits/],
    ["ZZ-TDM26-00001", /CC-XXX-YY-NNNNN/],
    ["ZZT-DM-26-00001", /CC-XXX-YY-NNNNN/],
    ["ZZ-TDM-26-0001", /CC-XXX-YY-NNNNN/],
    ["ZZ--TDM-26-00001", /CC-XXX-YY-NNNNN/],
    ["ZZ-TDM-2A-00001", /year of reference/],
  ];
  for (const [input, message] of rejects) {
    it(`rejects ${JSON.stringify(input)}`, () => {
      const result = parseIsrc(input);
      expect(result.ok).toBe(false);
      if (!result.ok) expect(result.message).toMatch(message);
      expect(() => normaliseIsrc(input)).toThrow(message);
    });
  }
});
