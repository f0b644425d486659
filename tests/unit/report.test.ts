// The loudness report's arithmetic (PLR, normalisation turn-down), its CSV
// (RFC 4180 quoting, formula-safe text), file names inside the package, and
// the delivery warnings. Expected values are worked out by hand in comments.
// PLR = true peak (dBTP) − integrated loudness (LUFS), both per ITU-R BS.1770-4
// (the definition from memory, as used in loudness reports); the turn-down is
// integrated − reference, the streaming references being editable settings.
import { describe, expect, it } from "vitest";
import { csvField, toCsv } from "../../app/lib/delivery/csv.ts";
import { safeName, trackFileName, uniqueFolderNames } from "../../app/lib/delivery/file-names.ts";
import { buildLoudnessReport, loudnessReportCsv } from "../../app/lib/delivery/loudness-report.ts";
import { checkReferences, turnDownDb } from "../../app/lib/delivery/normalisation.ts";
import { deliveryWarnings } from "../../app/lib/delivery/warnings.ts";
import { DEFAULT_DELIVERY_FORMATS } from "../../app/lib/delivery/default-formats.ts";
import { checkDeliveryFormat } from "../../dsp/delivery/delivery-format.ts";

/** A minimal RFC 4180 reader, to read back what the writer wrote. */
function parseCsv(text: string): string[][] {
  const rows: string[][] = [];
  let row: string[] = [];
  let field = "";
  let quoted = false;
  for (let i = 0; i < text.length; i++) {
    const c = text[i]!;
    if (quoted) {
      if (c === '"' && text[i + 1] === '"') (field += '"'), i++;
      else if (c === '"') quoted = false;
      else field += c;
    } else if (c === '"') quoted = true;
    else if (c === ",") row.push(field), (field = "");
    else if (c === "\r" && text[i + 1] === "\n") row.push(field), rows.push(row), (row = []), (field = ""), i++;
    else field += c;
  }
  expect(field, "the CSV ends with CRLF").toBe("");
  return rows;
}

const references = [
  { name: "Streaming reference", lufs: -14 },
  { name: "Quiet reference", lufs: -16 },
  { name: "Broadcast reference", lufs: -23 },
];

describe("turn-down", () => {
  it("is integrated − reference when louder, never negative", () => {
    expect(turnDownDb(-9.2, -14)).toBeCloseTo(4.8, 12);
    expect(turnDownDb(-15, -14)).toBe(0);
    expect(turnDownDb(-14, -14)).toBe(0);
    expect(turnDownDb(-15, -23)).toBeCloseTo(8, 12);
    expect(turnDownDb(Number.NEGATIVE_INFINITY, -14)).toBe(0);
  });

  it("reference lists are checked", () => {
    expect(checkReferences([{ name: " A ", lufs: -14 }])).toEqual([{ name: "A", lufs: -14 }]);
    expect(() => checkReferences([{ name: "A", lufs: -14 }, { name: "a", lufs: -16 }])).toThrow(/twice/);
    expect(() => checkReferences([{ name: "A", lufs: 3 }])).toThrow(/between -40 and 0/);
    expect(() => checkReferences({})).toThrow(/list/);
  });
});

describe("the loudness report", () => {
  const report = buildLoudnessReport({
    tracks: [
      { trackId: "t2", position: 2, title: 'Salt, "Cedar"', isrc: null },
      { trackId: "t1", position: 1, title: "=Low Tide", isrc: "ZZQ1X2612345" },
    ],
    formats: [
      { formatId: "f1", name: "Streaming" },
      { formatId: "f2", name: "CD" },
    ],
    deliveries: [
      // t1 streaming: I −9.2, TP −1.0 → PLR 8.2; turn-down 4.8, 6.8, 13.8.
      { trackId: "t1", formatId: "f1", analysis: { integratedLufs: -9.2, loudnessRangeLu: 5.46, truePeakDbtp: -1.0, reconstructedPeakDb: -0.962 }, warnings: [] },
      // t1 CD: I −15.04, TP −0.987 → PLR 14.053; turn-down 0, 0.96, 7.96.
      { trackId: "t1", formatId: "f2", analysis: { integratedLufs: -15.04, loudnessRangeLu: 7, truePeakDbtp: -0.987 }, warnings: ["true peak high"] },
      // t2 streaming: silent.
      { trackId: "t2", formatId: "f1", analysis: { integratedLufs: Number.NEGATIVE_INFINITY, loudnessRangeLu: 0, truePeakDbtp: Number.NEGATIVE_INFINITY }, warnings: ["silent"] },
    ],
    references,
  });

  it("has a row per track × format in track order, with PLR and turn-downs", () => {
    expect(report.rows.map((r) => [r.position, r.format, r.delivered])).toEqual([
      [1, "Streaming", true],
      [1, "CD", true],
      [2, "Streaming", true],
      [2, "CD", false],
    ]);
    const [a, b, c, d] = report.rows;
    expect(a!.plrDb).toBeCloseTo(8.2, 12);
    a!.turnDownDb.forEach((v, i) => expect(v).toBeCloseTo([4.8, 6.8, 13.8][i]!, 12));
    expect(b!.plrDb).toBeCloseTo(14.053, 12);
    b!.turnDownDb.forEach((v, i) => expect(v).toBeCloseTo([0, 0.96, 7.96][i]!, 12));
    expect(c).toMatchObject({ integratedLufs: null, truePeakDbtp: null, plrDb: null, turnDownDb: [null, null, null], warnings: ["silent"] });
    expect(d).toMatchObject({ integratedLufs: null, warnings: ["not delivered"] });
  });

  it("writes CSV that reads back to the same cells, quoted where needed", () => {
    const csv = loudnessReportCsv(report);
    const rows = parseCsv(csv);
    expect(rows[0]).toEqual([
      "Track",
      "Title",
      "ISRC",
      "Format",
      "Integrated (LUFS)",
      "Loudness range (LU)",
      "True peak (dBTP)",
      "Reconstructed peak (dBFS)",
      "PLR (dB)",
      "Turn-down at Streaming reference -14 LUFS (dB)",
      "Turn-down at Quiet reference -16 LUFS (dB)",
      "Turn-down at Broadcast reference -23 LUFS (dB)",
      "Warnings",
    ]);
    expect(rows[1]).toEqual(["1", "'=Low Tide", "ZZQ1X2612345", "Streaming", "-9.2", "5.5", "-1", "-0.96", "8.2", "4.8", "6.8", "13.8", ""]);
    expect(rows[2]).toEqual(["1", "'=Low Tide", "ZZQ1X2612345", "CD", "-15", "7", "-0.99", "", "14.1", "0", "1", "8", "true peak high"]);
    expect(rows[3]).toEqual(["2", 'Salt, "Cedar"', "", "Streaming", "", "0", "", "", "", "", "", "", "silent"]);
    expect(rows[4]).toEqual(["2", 'Salt, "Cedar"', "", "CD", "", "", "", "", "", "", "", "", "not delivered"]);
    expect(rows).toHaveLength(5);
    expect(csv).toContain('"Salt, ""Cedar"""');
  });

  it("quotes commas, quotes and line breaks, and neutralises formulas in text only", () => {
    expect(csvField("plain")).toBe("plain");
    expect(csvField("a,b")).toBe('"a,b"');
    expect(csvField('say "hi"')).toBe('"say ""hi"""');
    expect(csvField("two\nlines")).toBe('"two\nlines"');
    expect(csvField("+1")).toBe("'+1");
    expect(csvField("@x")).toBe("'@x");
    expect(csvField(-14)).toBe("-14");
    expect(csvField(Number.NaN)).toBe("");
    expect(csvField(null)).toBe("");
    expect(toCsv([["a", 1], ["b", null]])).toBe("a,1\r\nb,\r\n");
  });
});

describe("names inside the package", () => {
  it("replaces characters file systems refuse and numbers tracks", () => {
    expect(trackFileName(3, "Harbour Lights")).toBe("03 Harbour Lights.wav");
    expect(trackFileName(12, 'Salt/Cedar: "Part 1"?')).toBe("12 Salt_Cedar_ _Part 1__.wav");
    expect(trackFileName(104, "x")).toBe("104 x.wav");
    expect(trackFileName(1, "a\\b*c<d>e|f\u0007g")).toBe("01 a_b_c_d_e_f_g.wav");
    expect(trackFileName(1, "  ...  ")).toBe("01 Track.wav");
    expect(trackFileName(1, "Ends with dots...")).toBe("01 Ends with dots.wav");
    expect(safeName("x".repeat(300), "F")).toHaveLength(120);
    expect(uniqueFolderNames(["A/B", "A:B", "a_b", "C"])).toEqual(["A_B", "A_B (2)", "a_b (3)", "C"]);
  });
});

describe("default formats and warnings", () => {
  it("offers a 24-bit 48 kHz and a dithered 16-bit 44.1 kHz master at −1 dBTP, both valid", () => {
    expect(DEFAULT_DELIVERY_FORMATS.map((f) => [f.sampleRate, f.bitDepth, f.dither, f.ceilingDbtp])).toEqual([
      [48000, 24, "tpdf", -1],
      [44100, 16, "tpdf", -1],
    ]);
    for (const f of DEFAULT_DELIVERY_FORMATS) expect(() => checkDeliveryFormat(f)).not.toThrow();
  });

  it("flags overs, missed targets, silence and a file of the wrong kind", () => {
    const format = { sampleRate: 44100, bitDepth: 16, dither: "tpdf", ceilingDbtp: -1, targetLufs: -14 } as const;
    const ok = { integratedLufs: -14.3, loudnessRangeLu: 6, truePeakDbtp: -1.04 };
    expect(deliveryWarnings(format, ok, { sampleRate: 44100, bitDepth: 16, sampleFormat: "int" })).toEqual([]);
    expect(deliveryWarnings(format, { ...ok, truePeakDbtp: -0.9 })).toEqual(["true peak -0.90 dBTP is above the ceiling of -1 dBTP"]);
    expect(deliveryWarnings(format, { ...ok, integratedLufs: -12.9 })).toEqual(["integrated loudness -12.9 LUFS is 1.1 LU above the target of -14 LUFS"]);
    expect(deliveryWarnings(format, { ...ok, integratedLufs: Number.NEGATIVE_INFINITY })).toEqual(["the file is silent (no gated loudness)"]);
    expect(deliveryWarnings(format, ok, { sampleRate: 48000, bitDepth: 32, sampleFormat: "float" })).toEqual([
      "the file is 48000 Hz, the format asks for 44100 Hz",
      "the file is 32-bit float, the format asks for 16-bit",
    ]);
  });
});
