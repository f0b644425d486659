// Input beside output: the figures of a render's two analyses, with units.
import { fmt } from "./format.ts";
import { DataTable } from "../data-table.tsx";

type Analysis = Partial<Record<"integratedLufs" | "loudnessRangeLu" | "truePeakDbtp" | "reconstructedPeakDb" | "samplePeakDbfs" | "maxShortTermLufs" | "maxMomentaryLufs", number | null>>;

const ROWS: { key: keyof Analysis; label: string; unit: string }[] = [
  { key: "integratedLufs", label: "Integrated loudness", unit: "LUFS" },
  { key: "loudnessRangeLu", label: "Loudness range", unit: "LU" },
  { key: "truePeakDbtp", label: "True peak", unit: "dBTP" },
  { key: "reconstructedPeakDb", label: "Reconstructed peak (8×)", unit: "dBFS" },
  { key: "samplePeakDbfs", label: "Sample peak", unit: "dBFS" },
  { key: "maxShortTermLufs", label: "Maximum short-term", unit: "LUFS" },
  { key: "maxMomentaryLufs", label: "Maximum momentary", unit: "LUFS" },
];

export function AnalysesTable({ input, output }: { input: unknown; output: unknown }) {
  const a = (input ?? {}) as Analysis;
  const b = (output ?? {}) as Analysis;
  return (
    <DataTable label="Analyses" frame="bare" className="w-full max-w-xl text-sm" columns={[{ label: "Measure" }, { label: "Input", align: "right" }, { label: "Output", align: "right" }]}>
      {ROWS.map((row) => (
        <tr key={row.key} data-measure={row.key}>
          <th scope="row" className="font-normal">{row.label}</th>
          <td className="num text-right whitespace-nowrap">{fmt(a[row.key], row.unit)}</td>
          <td className="num text-right whitespace-nowrap">{fmt(b[row.key], row.unit)}</td>
        </tr>
      ))}
    </DataTable>
  );
}
