// The two sources' analyses side by side with their difference (A − B), in
// the units of each measure. Peak-to-loudness ratio is true peak minus
// integrated loudness (PLR as AES TD1004 uses it; from memory), worked out
// here from the two stored figures.
import type { SourceAnalysis } from "../../models/compare-source.server.ts";
import { fmt } from "../render/format.ts";
import { DataTable } from "../data-table.tsx";

type Measure = { key: string; label: string; unit: string; digits: number; value: (a: SourceAnalysis) => number | null | undefined };

const plr = (a: SourceAnalysis) => (typeof a.truePeakDbtp === "number" && typeof a.integratedLufs === "number" ? a.truePeakDbtp - a.integratedLufs : null);

export const MEASURES: Measure[] = [
  { key: "integratedLufs", label: "Integrated loudness", unit: "LUFS", digits: 1, value: (a) => a.integratedLufs },
  { key: "loudnessRangeLu", label: "Loudness range", unit: "LU", digits: 1, value: (a) => a.loudnessRangeLu },
  { key: "truePeakDbtp", label: "True peak", unit: "dBTP", digits: 1, value: (a) => a.truePeakDbtp },
  { key: "samplePeakDbfs", label: "Sample peak", unit: "dBFS", digits: 1, value: (a) => a.samplePeakDbfs },
  { key: "maxShortTermLufs", label: "Maximum short-term", unit: "LUFS", digits: 1, value: (a) => a.maxShortTermLufs },
  { key: "plrDb", label: "Peak-to-loudness ratio", unit: "dB", digits: 1, value: plr },
  { key: "correlation", label: "Correlation", unit: "", digits: 2, value: (a) => a.correlation },
];

// The unit of a difference: LUFS − LUFS is LU, dBTP − dBTP and dBFS − dBFS are dB.
const DIFFERENCE_UNIT: Record<string, string> = { LUFS: "LU", dBTP: "dB", dBFS: "dB", LU: "LU", dB: "dB", "": "" };

function signed(value: number | null, unit: string, digits: number): string {
  if (value === null || !Number.isFinite(value)) return "—";
  const rounded = Number(value.toFixed(digits));
  const sign = rounded > 0 ? "+" : rounded < 0 ? "−" : "±";
  return `${sign}${Math.abs(rounded).toFixed(digits)}${unit ? ` ${unit}` : ""}`;
}

const plain = (v: number | null, digits: number) => (v === null ? "—" : v.toFixed(digits).replace("-", "−"));

const num = (v: number | null | undefined) => (typeof v === "number" && Number.isFinite(v) ? v : null);

export function AnalysesCompare({ a, b, labels }: { a: SourceAnalysis | null; b: SourceAnalysis | null; labels: { a: string; b: string } }) {
  if (!a && !b) return <p className="text-sm text-ink-soft">Neither source has an analysis yet.</p>;
  return (
    <DataTable
      label="Analyses of A and B"
      frame="bare"
      className="w-full text-sm"
      columns={[{ label: "Measure" }, { label: "A", align: "right", title: labels.a }, { label: "B", align: "right", title: labels.b }, { label: "A − B", align: "right" }]}
    >
      {MEASURES.map((m) => {
        const va = a ? num(m.value(a)) : null;
        const vb = b ? num(m.value(b)) : null;
        return (
          <tr key={m.key} data-measure={m.key}>
            <th scope="row" className="font-normal">
              {m.label}
            </th>
            <td className="num text-right whitespace-nowrap">{m.unit ? fmt(va, m.unit, m.digits) : plain(va, m.digits)}</td>
            <td className="num text-right whitespace-nowrap">{m.unit ? fmt(vb, m.unit, m.digits) : plain(vb, m.digits)}</td>
            <td className="num text-right whitespace-nowrap" data-difference>
              {signed(va !== null && vb !== null ? va - vb : null, DIFFERENCE_UNIT[m.unit] ?? m.unit, m.digits)}
            </td>
          </tr>
        );
      })}
    </DataTable>
  );
}
