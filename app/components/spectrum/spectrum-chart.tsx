// Long-term third-octave spectra (IEC 61260-1 bands, dB re a full-scale sine)
// on one log-frequency axis, and, for two of them, their difference (A − B)
// in a panel below. Plain SVG: 30 points a line need no chart library, and
// the same component draws the album's small per-track spectra (`compact`).
import { useId } from "react";

export type SpectrumBand = { centreHz: number; levelDb: number | null };
export type SpectrumSeries = { key: string; label: string; bands: SpectrumBand[] | null; colour?: string };

const MIN_HZ = 20;
const MAX_HZ = 25000;
const COLOURS = ["var(--color-accent)", "var(--color-ink)"];
const DIFFERENCE_COLOUR = "var(--color-danger)";
const TICKS_HZ = [31.5, 63, 125, 250, 500, 1000, 2000, 4000, 8000, 16000];
const RANGE_DB = 60;
const DIFFERENCE_RANGE_DB = 12;

const tickLabel = (hz: number) => (hz >= 1000 ? `${hz / 1000}k` : String(hz));
const finite = (v: number | null | undefined): v is number => typeof v === "number" && Number.isFinite(v);

/** "M x y L x y …" through the finite points; a gap (silent band) starts a new segment. */
function linePath(points: Array<[number, number | null]>): string {
  let d = "";
  let pen = false;
  for (const [x, y] of points) {
    if (y === null) {
      pen = false;
      continue;
    }
    d += `${pen ? "L" : "M"}${x.toFixed(1)} ${y.toFixed(1)} `;
    pen = true;
  }
  return d.trim();
}

/** Per band, level of A minus level of B (dB), where both are finite. */
export function spectrumDifference(a: SpectrumBand[], b: SpectrumBand[]): SpectrumBand[] {
  return a.map((band) => {
    const other = b.find((o) => o.centreHz === band.centreHz);
    return { centreHz: band.centreHz, levelDb: finite(band.levelDb) && finite(other?.levelDb) ? band.levelDb - other.levelDb : null };
  });
}

export function SpectrumChart({
  series,
  difference = series.length === 2,
  compact = false,
  title,
}: {
  series: SpectrumSeries[];
  difference?: boolean;
  compact?: boolean;
  title?: string;
}) {
  const titleId = useId();
  const drawn = series.filter((s) => s.bands && s.bands.some((b) => finite(b.levelDb)));
  if (drawn.length === 0) return <p className="text-sm text-ink-soft">{compact ? "—" : "No spectrum measured yet."}</p>;
  const width = compact ? 160 : 720;
  const plotH = compact ? 56 : 240;
  const diffH = difference && !compact && drawn.length === 2 ? 110 : 0;
  const left = compact ? 2 : 44;
  const right = compact ? 2 : 12;
  const top = compact ? 2 : 10;
  const gap = diffH ? 34 : 0;
  const bottom = compact ? 2 : 24;
  const height = top + plotH + gap + diffH + bottom;
  const x = (hz: number) => left + ((Math.log10(hz) - Math.log10(MIN_HZ)) / (Math.log10(MAX_HZ) - Math.log10(MIN_HZ))) * (width - left - right);
  const levels = drawn.flatMap((s) => s.bands!.map((b) => b.levelDb).filter(finite));
  const maxDb = Math.ceil(Math.max(...levels) / 10) * 10;
  const minDb = maxDb - RANGE_DB;
  const y = (db: number) => top + ((maxDb - Math.max(minDb, Math.min(maxDb, db))) / RANGE_DB) * plotH;
  const diffTop = top + plotH + gap;
  const yDiff = (db: number) => diffTop + diffH / 2 - (Math.max(-DIFFERENCE_RANGE_DB, Math.min(DIFFERENCE_RANGE_DB, db)) / (2 * DIFFERENCE_RANGE_DB)) * diffH;
  const diff = diffH ? spectrumDifference(drawn[0].bands!, drawn[1].bands!) : null;
  const gridDb = Array.from({ length: RANGE_DB / 10 + 1 }, (_, i) => maxDb - 10 * i);

  return (
    <figure className={compact ? "" : "card p-3"} data-testid={compact ? "spectrum-small" : "spectrum-chart"}>
      <svg
        viewBox={`0 0 ${width} ${height}`}
        className="h-auto w-full"
        role="img"
        aria-labelledby={titleId}
        style={compact ? { maxWidth: `${width}px` } : undefined}
      >
        <title id={titleId}>
          {title ??
            `Third-octave spectrum: ${drawn.map((s) => s.label).join(" and ")}${diff ? ", and their difference" : ""}`}
        </title>
        {!compact && (
          <g className="text-[10px]" fill="var(--color-ink-soft)">
            {gridDb.map((db) => (
              <g key={db}>
                <line x1={left} x2={width - right} y1={y(db)} y2={y(db)} stroke="var(--color-rule)" strokeWidth={0.5} />
                <text x={left - 4} y={y(db) + 3} textAnchor="end" className="num">
                  {db.toString().replace("-", "−")}
                </text>
              </g>
            ))}
            {TICKS_HZ.map((hz) => (
              <g key={hz}>
                <line x1={x(hz)} x2={x(hz)} y1={top} y2={top + plotH} stroke="var(--color-rule)" strokeWidth={0.5} />
                <text x={x(hz)} y={top + plotH + 12} textAnchor="middle" className="num">
                  {tickLabel(hz)}
                </text>
              </g>
            ))}
            <text x={4} y={top + 8} className="num">
              dB
            </text>
          </g>
        )}
        {drawn.map((s, i) => (
          <path
            key={s.key}
            data-series={s.key}
            d={linePath(s.bands!.map((b) => [x(b.centreHz), finite(b.levelDb) ? y(b.levelDb) : null]))}
            fill="none"
            stroke={s.colour ?? COLOURS[i % COLOURS.length]}
            strokeWidth={compact ? 1.2 : 2}
            strokeOpacity={i === 0 ? 1 : 0.65}
            strokeLinejoin="round"
          />
        ))}
        {diff && (
          <g>
            <text x={left} y={diffTop - 8} className="text-[10px]" fill="var(--color-ink-soft)">
              A − B (dB)
            </text>
            {[DIFFERENCE_RANGE_DB, 6, 0, -6, -DIFFERENCE_RANGE_DB].map((db) => (
              <g key={db} className="text-[10px]" fill="var(--color-ink-soft)">
                <line x1={left} x2={width - right} y1={yDiff(db)} y2={yDiff(db)} stroke="var(--color-rule)" strokeWidth={db === 0 ? 1 : 0.5} />
                <text x={left - 4} y={yDiff(db) + 3} textAnchor="end" className="num">
                  {db > 0 ? `+${db}` : db.toString().replace("-", "−")}
                </text>
              </g>
            ))}
            <path data-series="difference" d={linePath(diff.map((b) => [x(b.centreHz), finite(b.levelDb) ? yDiff(b.levelDb) : null]))} fill="none" stroke={DIFFERENCE_COLOUR} strokeWidth={1.5} />
            {TICKS_HZ.map((hz) => (
              <text key={hz} x={x(hz)} y={diffTop + diffH + 12} textAnchor="middle" className="num text-[10px]" fill="var(--color-ink-soft)">
                {tickLabel(hz)}
              </text>
            ))}
          </g>
        )}
      </svg>
      {!compact && (
        <figcaption className="mt-1 text-xs text-ink-soft">
          {drawn.map((s, i) => (
            <span key={s.key} className="mr-5 inline-flex items-center gap-1.5">
              <span className="inline-block h-0.5 w-4" style={{ background: s.colour ?? COLOURS[i % COLOURS.length], opacity: i === 0 ? 1 : 0.65 }} />
              {s.label}
            </span>
          ))}
          {diff && (
            <span className="inline-flex items-center gap-1.5">
              <span className="inline-block h-0.5 w-4" style={{ background: DIFFERENCE_COLOUR }} />
              difference (A − B)
            </span>
          )}
          <span className="block">Long-term level in third-octave bands (IEC 61260-1), dB relative to a full-scale sine; frequency in Hz on a log scale.</span>
        </figcaption>
      )}
    </figure>
  );
}
