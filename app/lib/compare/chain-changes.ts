// The parameters that differ between two chain revisions, in words a
// comparison page shows beside the traces. The difference itself is
// diffParams of app/models/chain.server.ts (run in the loader); this only
// names where each change sits: "Stage 3 · compress · ratio".
import type { ParameterChange } from "../../models/chain.server.ts";

export type LabelledChange = ParameterChange & { stageNumber: number | null; stageType: string | null; label: string; beforeText: string; afterText: string };

type ChainLike = { stages?: { type?: string }[] } | null | undefined;

const PATH_PART = /([A-Za-z_$][\w$]*)|\[(\d+)\]/g;

/** `stages[2].bands[1].ratio` → ["stages", 2, "bands", 1, "ratio"] */
function parts(path: string): (string | number)[] {
  return [...path.matchAll(PATH_PART)].map((m) => (m[1] !== undefined ? m[1] : Number(m[2])));
}

const UNITS: [RegExp, string][] = [
  [/Db$/, " dB"],
  [/Dbtp$/, " dBTP"],
  [/Lufs$/, " LUFS"],
  [/Hz$/, " Hz"],
  [/Ms$/, " ms"],
];

/** A value with the unit its parameter's name carries (thresholdDb → "-20 dB"). */
export function formatParameterValue(name: string, value: unknown): string {
  if (value === null || value === undefined) return "—";
  if (typeof value === "number") {
    const unit = UNITS.find(([re]) => re.test(name))?.[1] ?? "";
    return `${value}${unit}`;
  }
  if (Array.isArray(value)) return value.map((v) => formatParameterValue(name, v)).join(", ");
  return String(value);
}

export function labelChanges(changes: ParameterChange[], before: unknown, after: unknown): LabelledChange[] {
  const stageType = (i: number) => (after as ChainLike)?.stages?.[i]?.type ?? (before as ChainLike)?.stages?.[i]?.type ?? null;
  return changes.map((change) => {
    const p = parts(change.path);
    let stageNumber: number | null = null;
    let type: string | null = null;
    const words: string[] = [];
    for (let k = 0; k < p.length; k++) {
      const part = p[k];
      if (part === "stages" && typeof p[k + 1] === "number") {
        stageNumber = (p[k + 1] as number) + 1;
        type = stageType(p[k + 1] as number);
        words.push(`Stage ${stageNumber}${type ? ` · ${type}` : ""}`);
        k++;
      } else if (part === "bands" && typeof p[k + 1] === "number") {
        words.push(`band ${(p[k + 1] as number) + 1}`);
        k++;
      } else if (part === "output") {
        words.push("Output");
      } else if (typeof part === "number") {
        words.push(`#${part + 1}`);
      } else {
        words.push(part);
      }
    }
    const name = String([...p].reverse().find((x) => typeof x === "string") ?? "");
    return {
      ...change,
      stageNumber,
      stageType: type,
      label: words.join(" · "),
      beforeText: change.change === "added" ? "—" : formatParameterValue(name, change.before),
      afterText: change.change === "removed" ? "—" : formatParameterValue(name, change.after),
    };
  });
}
