// The desk's output meters, as text with units (what screen readers and
// tests read) and as bars: momentary, short-term and integrated loudness,
// true peak with its overs, correlation, and what Match is doing.
import { useMeters, type MeterStore } from "./meter-store.ts";
import { fmtDb, fmtDbtp, fmtLufs } from "./format.ts";

/** Bar length for a loudness: −40 LUFS empty, 0 LUFS full. */
const lufsFraction = (lufs: number) => (Number.isFinite(lufs) ? Math.min(1, Math.max(0, (lufs + 40) / 40)) : 0);

function Row({ label, value, fraction, testId, tone = "accent" }: { label: string; value: string; fraction: number | null; testId: string; tone?: "accent" | "danger" }) {
  return (
    <div className="grid grid-cols-[7.5rem_minmax(0,1fr)_6.5rem] items-center gap-2 text-sm">
      <dt className="text-ink-soft">{label}</dt>
      <dd className="relative h-2 overflow-hidden rounded-sm bg-paper-deep" aria-hidden="true">
        {fraction !== null && <span className={`absolute inset-y-0 left-0 ${tone === "danger" ? "bg-danger" : "bg-accent"}`} style={{ width: `${fraction * 100}%` }} />}
      </dd>
      <dd className="num text-right" data-testid={testId}>
        {value}
      </dd>
    </div>
  );
}

export function OutputMeters({ store, ceilingDbtp }: { store: MeterStore; ceilingDbtp: number }) {
  const m = useMeters(store);
  const momentary = m?.momentaryLufs ?? -Infinity;
  const truePeak = m?.truePeakDbtp ?? -Infinity;
  return (
    <section aria-labelledby="meters-title" className="card space-y-2 p-3">
      <h2 id="meters-title" className="text-sm font-semibold">
        Output
      </h2>
      <dl className="space-y-1.5" aria-live="off">
        <Row label="Momentary" value={fmtLufs(momentary)} fraction={lufsFraction(momentary)} testId="meter-momentary" />
        <Row label="Short-term" value={fmtLufs(m?.shortTermLufs ?? -Infinity)} fraction={lufsFraction(m?.shortTermLufs ?? -Infinity)} testId="meter-short-term" />
        <Row label="Integrated" value={fmtLufs(m?.integratedLufs ?? -Infinity)} fraction={lufsFraction(m?.integratedLufs ?? -Infinity)} testId="meter-integrated" />
        <Row
          label="True peak"
          value={fmtDbtp(truePeak)}
          fraction={Number.isFinite(truePeak) ? Math.min(1, Math.max(0, (truePeak + 24) / 24)) : 0}
          testId="meter-true-peak"
          tone={truePeak > ceilingDbtp ? "danger" : "accent"}
        />
        <Row label="Overs" value={`${m?.oversCount ?? 0}`} fraction={null} testId="meter-overs" tone="danger" />
        <Row label="Correlation" value={(m?.correlation ?? 0).toFixed(2)} fraction={((m?.correlation ?? 0) + 1) / 2} testId="meter-correlation" />
        <Row label="Mix (input)" value={fmtLufs(m?.inputMomentaryLufs ?? -Infinity)} fraction={lufsFraction(m?.inputMomentaryLufs ?? -Infinity)} testId="meter-input" />
      </dl>
      {m && m.droppedBlocks + m.lateBlocks > 0 && (
        <p className="text-xs text-danger" data-testid="meter-late">
          <span className="num">{m.droppedBlocks + m.lateBlocks}</span> audio blocks were dropped or late: the computer could not keep up, and what you hear may have gaps.
        </p>
      )}
    </section>
  );
}

export function MatchOffset({ store }: { store: MeterStore }) {
  const m = useMeters(store);
  return (
    <span className="num text-sm" data-testid="match-offset" aria-label="Match offset">
      {fmtDb(m?.matchOffsetDb ?? 0, true)}
    </span>
  );
}

export function Position({ store }: { store: MeterStore }) {
  const m = useMeters(store);
  const s = m?.positionS ?? null;
  return (
    <span className="num text-sm text-ink-soft" aria-label="Position" data-testid="position">
      {s === null ? "–:––.–" : `${Math.floor(s / 60)}:${(s % 60).toFixed(1).padStart(4, "0")}`}
    </span>
  );
}
