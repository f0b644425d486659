// What changed between two revisions, parameter by parameter, with units.
import type { ParameterChange } from "../../models/chain.server.ts";
import { describePath, formatValue } from "./labels.ts";

export function RevisionDiff({ changes, before, after }: { changes: ParameterChange[]; before: unknown; after: unknown }) {
  if (changes.length === 0) return <p className="text-sm text-ink-soft">No parameter changed.</p>;
  return (
    <ul className="divide-y divide-rule rounded-md border border-rule bg-card" aria-label="Changes">
      {changes.map((change) => {
        const { where, label, unit } = describePath(change.path, [after, before]);
        return (
          <li key={change.path} className="flex flex-col gap-1 px-3 py-2 sm:flex-row sm:items-baseline sm:justify-between" data-path={change.path}>
            <span className="text-sm">
              {where && <span className="text-ink-soft">{where} · </span>}
              <span className="font-medium">{label}</span>
              {change.change !== "changed" && <span className="ml-2 text-xs text-ink-soft uppercase">{change.change}</span>}
            </span>
            <span className="num text-sm">
              {formatValue(change.before, unit)} → {formatValue(change.after, unit)}
            </span>
          </li>
        );
      })}
    </ul>
  );
}
