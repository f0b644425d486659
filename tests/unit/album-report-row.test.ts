// The loudness report's album row: PLR and turn-down derived like a track's,
// written to the CSV as a last row.
import { describe, expect, it } from "vitest";
import { buildLoudnessReport, loudnessReportCsv, withAlbumRow } from "../../app/lib/delivery/loudness-report.ts";

const base = buildLoudnessReport({
  tracks: [{ trackId: "t1", position: 1, title: "Harbour Lights", isrc: null }],
  formats: [{ formatId: "f1", name: "Streaming" }],
  deliveries: [{ trackId: "t1", formatId: "f1", analysis: { integratedLufs: -9.5, loudnessRangeLu: 5, truePeakDbtp: -1 }, warnings: [] }],
  references: [{ name: "Stream", lufs: -14 }],
});

describe("album row", () => {
  it("derives PLR and turn-down from the album's integrated loudness and highest true peak", () => {
    const r = withAlbumRow(base, { trackCount: 3, durationS: 754, integratedLufs: -10.2, loudnessRangeLu: 6.1, truePeakDbtp: -0.9 });
    expect(r.album).toMatchObject({ trackCount: 3, integratedLufs: -10.2, plrDb: expect.closeTo(9.3, 9), turnDownDb: [expect.closeTo(3.8, 9)] });
    const lines = loudnessReportCsv(r).trim().split("\r\n");
    expect(lines).toHaveLength(3);
    expect(lines[2]).toBe("Album,\"3 tracks, masters with gaps, 12:34\",,album,-10.2,6.1,-0.9,,9.3,3.8,");
  });
  it("no album measured: no album row", () => {
    expect(loudnessReportCsv(withAlbumRow(base, null)).trim().split("\r\n")).toHaveLength(2);
  });
});
