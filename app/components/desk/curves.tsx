// The desk's curves, drawn as plain SVG from dsp/curves/ (the same design
// code the processors run): the EQ's response per channel mode, a
// compressor's static curve with its live operating point, the multiband's
// bands lowered by their live gain reduction, and the limiter's gain
// reduction over the last seconds against its ceiling. Each figure has a
// caption in words and numbers for those who do not see it.
import { useMemo } from "react";
import { eqResponse, logFrequencies } from "../../../dsp/curves/eq-response.ts";
import { operatingPoint, staticCurve, type StaticCurveSettings } from "../../../dsp/curves/compressor-curve.ts";
import { crossoverBandsDb } from "../../../dsp/curves/crossover-bands.ts";
import type { EqBand } from "../../../dsp/chain/schema.ts";
import { fmtDb, fmtHz } from "./format.ts";

const W = 600;
const H = 220;
const PAD = { left: 40, right: 10, top: 10, bottom: 24 };
const LOW_HZ = 20;
const HIGH_HZ = 20000;
const FREQS = logFrequencies(LOW_HZ, HIGH_HZ, 240);
const MODE_COLOURS: Record<string, string> = { stereo: "var(--color-accent)", mid: "#8a5a14", side: "#6b3f8a", left: "#2f6b2f", right: "#a3321f" };
const BAND_COLOURS = ["#0e5f6b", "#8a5a14", "#6b3f8a", "#2f6b2f", "#a3321f"];

const xOfHz = (hz: number) => PAD.left + ((W - PAD.left - PAD.right) * Math.log(hz / LOW_HZ)) / Math.log(HIGH_HZ / LOW_HZ);
const yOf = (db: number, topDb: number, bottomDb: number) => PAD.top + ((H - PAD.top - PAD.bottom) * (topDb - db)) / (topDb - bottomDb);

function path(xs: ArrayLike<number>, ys: ArrayLike<number>, x: (v: number) => number, y: (v: number) => number): string {
  let d = "";
  for (let i = 0; i < xs.length; i++) {
    if (!Number.isFinite(ys[i])) continue;
    d += `${d ? "L" : "M"}${x(xs[i]).toFixed(1)},${y(ys[i]).toFixed(1)}`;
  }
  return d;
}

function FrequencyGrid({ topDb, bottomDb, stepDb }: { topDb: number; bottomDb: number; stepDb: number }) {
  const lines = [];
  for (let db = Math.ceil(bottomDb / stepDb) * stepDb; db <= topDb; db += stepDb) lines.push(db);
  return (
    <g className="text-ink-faint" fontSize="10" fill="currentColor">
      {[100, 1000, 10000].map((hz) => (
        <g key={hz}>
          <line x1={xOfHz(hz)} x2={xOfHz(hz)} y1={PAD.top} y2={H - PAD.bottom} stroke="var(--color-rule)" />
          <text x={xOfHz(hz)} y={H - 8} textAnchor="middle">
            {hz >= 1000 ? `${hz / 1000}k` : hz} Hz
          </text>
        </g>
      ))}
      {lines.map((db) => (
        <g key={db}>
          <line x1={PAD.left} x2={W - PAD.right} y1={yOf(db, topDb, bottomDb)} y2={yOf(db, topDb, bottomDb)} stroke="var(--color-rule)" strokeDasharray={db === 0 ? undefined : "2 3"} />
          <text x={PAD.left - 4} y={yOf(db, topDb, bottomDb) + 3} textAnchor="end">
            {db > 0 ? `+${db}` : db}
          </text>
        </g>
      ))}
    </g>
  );
}

function Figure({ title, caption, children, testId }: { title: string; caption: string; children: React.ReactNode; testId: string }) {
  return (
    <figure className="min-w-0" data-testid={testId}>
      <svg viewBox={`0 0 ${W} ${H}`} className="h-auto w-full rounded-md border border-rule bg-card" role="img" aria-label={`${title}. ${caption}`}>
        {children}
      </svg>
      <figcaption className="mt-1 text-xs text-ink-soft">
        <span className="font-medium text-ink">{title}</span> · {caption}
      </figcaption>
    </figure>
  );
}

export function EqCurve({ bands, sampleRate }: { bands: EqBand[]; sampleRate: number }) {
  const curves = useMemo(() => {
    const usable = bands.filter((b) => typeof b.freqHz === "number" && typeof b.gainDb === "number" && typeof b.q === "number" && b.q > 0 && b.freqHz > 0 && b.freqHz < sampleRate / 2);
    return eqResponse(usable, sampleRate, FREQS);
  }, [bands, sampleRate]);
  const extreme = Math.max(6, ...curves.flatMap((c) => Array.from(c.magnitudeDb).filter(Number.isFinite).map(Math.abs)));
  const span = extreme <= 6 ? 6 : extreme <= 12 ? 12 : 24;
  const stereo = curves[0].magnitudeDb;
  let maxI = 0;
  let minI = 0;
  stereo.forEach((v, i) => {
    if (v > stereo[maxI]) maxI = i;
    if (v < stereo[minI]) minI = i;
  });
  const boost = stereo[maxI] >= 0.05 ? `most boost ${fmtDb(stereo[maxI], true)} at ${fmtHz(FREQS[maxI])}` : "no boost";
  const cut = stereo[minI] <= -0.05 ? `most cut ${fmtDb(stereo[minI], true)} at ${fmtHz(FREQS[minI])}` : "no cut";
  const caption =
    `Stereo: ${boost}, ${cut}` +
    (curves.length > 1 ? `; also drawn: ${curves.slice(1).map((c) => c.mode).join(", ")}` : "");
  return (
    <Figure title="Equaliser response" caption={caption} testId="curve-eq">
      <FrequencyGrid topDb={span} bottomDb={-span} stepDb={span / 2} />
      {curves.map((c) => (
        <path key={c.mode} d={path(FREQS, c.magnitudeDb, xOfHz, (db) => yOf(Math.max(-span, Math.min(span, db)), span, -span))} fill="none" stroke={MODE_COLOURS[c.mode]} strokeWidth={c.mode === "stereo" ? 2 : 1.5} />
      ))}
      {curves.length > 1 && (
        <g fontSize="10">
          {curves.map((c, i) => (
            <text key={c.mode} x={W - PAD.right - 4} y={PAD.top + 12 + i * 12} textAnchor="end" fill={MODE_COLOURS[c.mode]}>
              {c.mode}
            </text>
          ))}
        </g>
      )}
    </Figure>
  );
}

const LEVEL_LOW = -60;
const LEVEL_HIGH = 0;

export function CompressorCurve({ settings: given, grDb, title = "Compressor curve" }: { settings: Pick<StaticCurveSettings, "thresholdDb" | "ratio" | "kneeDb"> & { makeupDb?: unknown }; grDb: number | null; title?: string }) {
  const { thresholdDb, ratio, kneeDb } = given;
  const makeupDb = typeof given.makeupDb === "number" ? given.makeupDb : 0;
  const settings = useMemo(() => ({ thresholdDb, ratio, kneeDb, makeupDb }), [thresholdDb, ratio, kneeDb, makeupDb]);
  const points = useMemo(() => staticCurve(settings, LEVEL_LOW, LEVEL_HIGH, 121), [settings]);
  const point = grDb === null ? null : operatingPoint(grDb, settings);
  const x = (db: number) => PAD.left + ((W - PAD.left - PAD.right) * (db - LEVEL_LOW)) / (LEVEL_HIGH - LEVEL_LOW);
  const top = LEVEL_HIGH + Math.max(0, settings.makeupDb);
  const y = (db: number) => yOf(Math.max(LEVEL_LOW, Math.min(top, db)), top, LEVEL_LOW);
  const caption = `threshold ${fmtDb(settings.thresholdDb)}, ratio ${settings.ratio}:1, knee ${fmtDb(settings.kneeDb)}` + (point ? `; now reducing ${fmtDb(grDb!)} at an input of ${fmtDb(point.inputDb)}` : "; no reduction now");
  return (
    <Figure title={title} caption={caption} testId="curve-compressor">
      <g fontSize="10" fill="currentColor" className="text-ink-faint">
        {[-60, -48, -36, -24, -12, 0].map((db) => (
          <g key={db}>
            <line x1={x(db)} x2={x(db)} y1={PAD.top} y2={H - PAD.bottom} stroke="var(--color-rule)" strokeDasharray="2 3" />
            <text x={x(db)} y={H - 8} textAnchor="middle">
              {db} dB in
            </text>
            <text x={PAD.left - 4} y={y(db) + 3} textAnchor="end">
              {db}
            </text>
          </g>
        ))}
      </g>
      <line x1={x(LEVEL_LOW)} y1={y(LEVEL_LOW)} x2={x(LEVEL_HIGH)} y2={y(LEVEL_HIGH)} stroke="var(--color-rule)" />
      <line x1={x(settings.thresholdDb)} x2={x(settings.thresholdDb)} y1={PAD.top} y2={H - PAD.bottom} stroke="var(--color-ink-faint)" strokeDasharray="4 3" />
      <path d={path(points.map((p) => p.inputDb), points.map((p) => p.outputDb), x, y)} fill="none" stroke="var(--color-accent)" strokeWidth={2} />
      {point && <circle cx={x(point.inputDb)} cy={y(point.outputDb)} r={5} fill="var(--color-danger)" data-testid="operating-point" />}
    </Figure>
  );
}

export function MultibandCurve({ crossoversHz, sampleRate, grDb, soloed }: { crossoversHz: number[]; sampleRate: number; grDb: number[]; soloed: boolean[] }) {
  const usable = crossoversHz.every((hz, i) => typeof hz === "number" && hz > 0 && hz < sampleRate / 2 && (i === 0 || hz > crossoversHz[i - 1]));
  const bands = useMemo(() => (usable ? crossoverBandsDb(crossoversHz, sampleRate, FREQS) : []), [crossoversHz, sampleRate, usable]);
  const bottom = -30;
  const anySolo = soloed.some(Boolean);
  const caption = usable
    ? `crossovers ${crossoversHz.map(fmtHz).join(", ")}; ` + grDb.map((g, i) => `band ${i + 1} −${(g ?? 0).toFixed(1)} dB`).join(", ")
    : "the crossovers must rise from band to band";
  return (
    <Figure title="Multiband bands" caption={caption} testId="curve-multiband">
      <FrequencyGrid topDb={3} bottomDb={bottom} stepDb={6} />
      {bands.map((band, b) => {
        const lowered = band.map((v) => Math.max(bottom, v - (grDb[b] ?? 0)));
        return (
          <path
            key={b}
            d={path(FREQS, lowered, xOfHz, (db) => yOf(db, 3, bottom))}
            fill="none"
            stroke={BAND_COLOURS[b % BAND_COLOURS.length]}
            strokeWidth={2}
            opacity={anySolo && !soloed[b] ? 0.3 : 1}
          />
        );
      })}
      {usable &&
        crossoversHz.map((hz) => <line key={hz} x1={xOfHz(hz)} x2={xOfHz(hz)} y1={yOf(-6.02, 3, bottom) - 4} y2={yOf(-6.02, 3, bottom) + 4} stroke="var(--color-ink)" />)}
    </Figure>
  );
}

export function LimiterHistory({ historyDb, ceilingDbtp, truePeakDbtp }: { historyDb: number[]; ceilingDbtp: number; truePeakDbtp: number | null }) {
  const bottom = -12;
  const n = Math.max(historyDb.length, 2);
  const x = (i: number) => PAD.left + ((W - PAD.left - PAD.right) * i) / (n - 1);
  const y = (db: number) => yOf(Math.max(bottom, Math.min(0, db)), 0, bottom);
  let d = `M${x(0)},${y(0)}`;
  historyDb.forEach((g, i) => (d += `L${x(i).toFixed(1)},${y(-g).toFixed(1)}`));
  d += `L${x(historyDb.length - 1)},${y(0)}Z`;
  const most = historyDb.length ? Math.max(...historyDb) : 0;
  const caption = `ceiling ${ceilingDbtp.toFixed(1)} dBTP; most reduction in the last seconds ${most.toFixed(1)} dB` + (truePeakDbtp !== null && Number.isFinite(truePeakDbtp) ? `; output true peak ${truePeakDbtp.toFixed(1)} dBTP` : "");
  return (
    <Figure title="Limiter gain reduction" caption={caption} testId="curve-limiter">
      <g fontSize="10" fill="currentColor" className="text-ink-faint">
        {[0, -3, -6, -9, -12].map((db) => (
          <g key={db}>
            <line x1={PAD.left} x2={W - PAD.right} y1={y(db)} y2={y(db)} stroke="var(--color-rule)" strokeDasharray={db === 0 ? undefined : "2 3"} />
            <text x={PAD.left - 4} y={y(db) + 3} textAnchor="end">
              {db}
            </text>
          </g>
        ))}
        <text x={W - PAD.right} y={H - 8} textAnchor="end">
          now
        </text>
      </g>
      {historyDb.length > 1 && <path d={d} fill="var(--color-accent)" fillOpacity={0.35} stroke="var(--color-accent)" />}
      {/* The ceiling against full scale, on the same dB axis as the reduction. */}
      <line x1={PAD.left} x2={W - PAD.right} y1={y(ceilingDbtp)} y2={y(ceilingDbtp)} stroke="var(--color-danger)" strokeDasharray="6 3" />
      <text x={PAD.left + 4} y={y(ceilingDbtp) - 3} fontSize="10" fill="var(--color-danger)">
        ceiling {ceilingDbtp.toFixed(1)} dBTP
      </text>
    </Figure>
  );
}
