// The album view: every track's current master in running order with its
// figures and a small spectrum, the album's loudness, a chart of integrated
// and short-term loudness along the album's timeline with its gaps, the
// consistency hints, and the album player. Self-contained (data in, optional
// gap editing out), so the client's review room can embed it with the
// masters sent to the client and without `gapForm`.
import { useEffect, useMemo, useRef, useState } from "react";
import { Form } from "react-router";
import { CartesianGrid, ComposedChart, Line, ReferenceArea, ReferenceLine, ResponsiveContainer, Tooltip, XAxis, YAxis } from "recharts";
import type { AlbumView as AlbumData } from "../../models/album.server.ts";
import { DataTable } from "../data-table.tsx";
import { fmt } from "../render/format.ts";
import { formatClock } from "../player/format.ts";
import { MonitoringNotice, MonitoringReminder, useMonitoringAck } from "../player/monitoring-notice.tsx";
import { SpectrumChart } from "../spectrum/spectrum-chart.tsx";
import { AlbumEngine } from "./album-engine.ts";

export type AlbumViewProps = {
  album: AlbumData;
  /** Staff: gaps are edited with a POST of intent "gap" to this page. */
  gapForm?: { busy: boolean; error?: string | null };
};

const signedLu = (v: number | null) => (v === null ? "—" : `${v > 0 ? "+" : v < 0 ? "−" : "±"}${Math.abs(v).toFixed(1)} LU`);

export function AlbumView({ album, gapForm }: AlbumViewProps) {
  const played = album.tracks.filter((t) => t.master);
  return (
    <div className="space-y-5" data-testid="album-view">
      <div className="flex flex-wrap items-baseline gap-x-6 gap-y-1 text-sm">
        <p>
          Album loudness{" "}
          <strong className="num" data-testid="album-lufs">
            {album.loudness ? fmt(album.loudness.integratedLufs, "LUFS") : "—"}
          </strong>
        </p>
        {album.loudness && (
          <>
            <p>
              Loudness range <span className="num">{fmt(album.loudness.loudnessRangeLu, "LU")}</span>
            </p>
            <p>
              Highest true peak <span className="num">{fmt(album.loudness.truePeakDbtp, "dBTP")}</span>
            </p>
          </>
        )}
        <p>
          Running time <span className="num">{formatClock(album.durationS)}</span>
        </p>
      </div>
      <p className="text-xs text-ink-soft">
        Album loudness is the integrated loudness (ITU-R BS.1770-4) of the masters played in order with their gaps, gated across the whole album.
        {album.loudnessNote && <span className="block text-ink">{album.loudnessNote}</span>}
      </p>

      {played.length > 0 && <AlbumPlayer album={album} />}

      <DataTable
        label="Album tracks"
        columns={[
          { label: "No.", align: "right", className: "w-12" },
          { label: "Track and master" },
          { label: "Gap before", align: "right" },
          { label: "Integrated", align: "right" },
          { label: "Range", align: "right" },
          { label: "True peak", align: "right" },
          { label: "PLR", align: "right" },
          { label: "Corr.", align: "right" },
          { label: "Spectrum" },
        ]}
      >
        {album.tracks.map((t, i) => (
          <tr key={t.trackId} data-album-track={t.trackId}>
            <td className="num text-right text-ink-soft">{t.position}</td>
            <td>
              <p className="font-medium">{t.title}</p>
              <p className="text-xs text-ink-soft">
                {t.master ? `${t.master.approved ? "Approved" : "Newest"} ${t.master.kind === "print" ? "print" : "preview (region only)"} · ${formatClock(t.master.durationS)}` : "No master yet"}
              </p>
              {t.hints.length > 0 && (
                <ul className="mt-1 space-y-0.5" aria-label={`Hints for ${t.title}`}>
                  {t.hints.map((h) => (
                    <li key={h.kind} className="text-xs text-danger" data-hint={h.kind}>
                      {h.text}
                    </li>
                  ))}
                </ul>
              )}
            </td>
            <td className="text-right whitespace-nowrap">
              {i === 0 ? (
                <span className="text-ink-faint">—</span>
              ) : gapForm ? (
                <Form method="post" className="flex items-center justify-end gap-1" preventScrollReset>
                  <input type="hidden" name="intent" value="gap" />
                  <input type="hidden" name="trackId" value={t.trackId} />
                  <input
                    name="gapS"
                    type="number"
                    min={0}
                    max={60}
                    step={0.1}
                    defaultValue={t.gapBeforeS}
                    key={t.gapBeforeS}
                    aria-label={`Gap before “${t.title}”, seconds`}
                    className="field-input num w-20 text-right"
                  />
                  <span className="text-xs text-ink-soft">s</span>
                  <button type="submit" className="btn-quiet px-2 text-xs" disabled={gapForm.busy}>
                    Set
                  </button>
                </Form>
              ) : (
                <span className="num">{t.gapBeforeS.toFixed(1)} s</span>
              )}
            </td>
            <td className="num text-right whitespace-nowrap">
              {fmt(t.master?.integratedLufs, "LUFS")}
              {t.master?.integratedLufs != null && album.medianLufs !== null && played.length > 1 && (
                <span className="block text-xs text-ink-soft">{signedLu(t.master.integratedLufs - album.medianLufs)} vs median</span>
              )}
            </td>
            <td className="num text-right whitespace-nowrap">{fmt(t.master?.loudnessRangeLu, "LU")}</td>
            <td className="num text-right whitespace-nowrap">{fmt(t.master?.truePeakDbtp, "dBTP")}</td>
            <td className="num text-right whitespace-nowrap">{fmt(t.master?.plrDb, "dB")}</td>
            <td className="num text-right whitespace-nowrap">{typeof t.master?.correlation === "number" ? t.master.correlation.toFixed(2) : "—"}</td>
            <td className="w-44">
              {t.master && (
                <>
                  <SpectrumChart compact series={[{ key: "master", label: t.title, bands: t.master.spectrum }]} title={`Spectrum of ${t.title}`} />
                  {t.master.tiltDbPerOctave !== null && <span className="num text-xs text-ink-soft">tilt {t.master.tiltDbPerOctave.toFixed(1).replace("-", "−")} dB/oct</span>}
                </>
              )}
            </td>
          </tr>
        ))}
      </DataTable>
      {gapForm?.error && (
        <p className="text-sm text-danger" role="alert">
          {gapForm.error}
        </p>
      )}
      <p className="text-xs text-ink-soft">
        Hints flag a track more than 2 LU from the album's median integrated loudness, or whose spectral tilt (the slope of its third-octave spectrum from 100 Hz to
        10 kHz, in dB per octave) is more than 1 dB/octave from the album's median. They are hints: nothing is changed.
      </p>

      {played.length > 0 && <AlbumLoudnessChart album={album} />}
    </div>
  );
}

/** Short-term loudness along the album's time, each track's integrated loudness as a level line, gaps shaded. */
function AlbumLoudnessChart({ album }: { album: AlbumData }) {
  const { rows, gaps } = useMemo(() => {
    const rows: Array<{ t: number; shortTerm: number | null; integrated: number | null }> = [];
    const gaps: Array<{ from: number; to: number }> = [];
    let prevEnd: number | null = null;
    for (const track of album.tracks) {
      if (!track.master || track.startS === null) continue;
      if (prevEnd !== null && track.startS > prevEnd) {
        gaps.push({ from: prevEnd, to: track.startS });
        rows.push({ t: prevEnd + 1e-3, shortTerm: null, integrated: null });
      }
      const { stepS, values } = track.master.shortTerm;
      values.forEach((v, k) => rows.push({ t: track.startS! + (k + 1) * stepS, shortTerm: v !== null && v > -70 ? v : null, integrated: track.master!.integratedLufs }));
      rows.push({ t: track.startS, shortTerm: null, integrated: track.master.integratedLufs });
      prevEnd = track.startS + track.master.durationS;
    }
    rows.sort((a, b) => a.t - b.t);
    return { rows, gaps };
  }, [album]);
  return (
    <figure className="card p-3" data-testid="album-loudness-chart">
      <figcaption className="mb-2 text-sm font-medium">Loudness across the album</figcaption>
      <div className="h-56 w-full">
        <ResponsiveContainer width="100%" height="100%">
          <ComposedChart data={rows} margin={{ top: 4, right: 8, bottom: 4, left: 0 }}>
            <CartesianGrid stroke="var(--color-rule)" strokeDasharray="2 4" />
            <XAxis dataKey="t" type="number" domain={[0, album.durationS]} tickFormatter={(v: number) => formatClock(v).replace(/\.\d$/, "")} fontSize={11} />
            <YAxis domain={[-40, 0]} allowDataOverflow fontSize={11} width={36} unit="" />
            <Tooltip formatter={(v) => (typeof v === "number" ? `${v.toFixed(1)} LUFS` : "—")} labelFormatter={(v) => formatClock(Number(v))} />
            {gaps.map((g) => (
              <ReferenceArea key={g.from} x1={g.from} x2={g.to} fill="var(--color-paper-deep)" fillOpacity={0.9} ifOverflow="hidden" />
            ))}
            {album.loudness && Number.isFinite(album.loudness.integratedLufs) && (
              <ReferenceLine y={album.loudness.integratedLufs} stroke="var(--color-danger)" strokeDasharray="4 3" label={{ value: "album", fontSize: 10, position: "insideTopRight" }} />
            )}
            <Line dataKey="shortTerm" name="Short-term" dot={false} stroke="var(--color-accent)" strokeWidth={1.2} isAnimationActive={false} connectNulls={false} />
            <Line dataKey="integrated" name="Integrated" type="stepAfter" dot={false} stroke="var(--color-ink)" strokeWidth={2} isAnimationActive={false} connectNulls={false} />
          </ComposedChart>
        </ResponsiveContainer>
      </div>
      <p className="mt-1 text-xs text-ink-soft">
        Short-term loudness (3 s, LUFS) and each track's integrated loudness along the album's time; the shaded stretches are the gaps; the dashed line is the album's loudness.
      </p>
    </figure>
  );
}

/** Plays the masters in order with their gaps on one clock that counts album time. */
function AlbumPlayer({ album }: { album: AlbumData }) {
  const items = useMemo(
    () => album.tracks.flatMap((t) => (t.master && t.startS !== null ? [{ url: t.master.audioUrl, startS: t.startS, durationS: t.master.durationS, title: t.title }] : [])),
    [album],
  );
  const [timeS, setTimeS] = useState(0);
  const [playing, setPlaying] = useState(false);
  const [error, setError] = useState<string | null>(null);
  const [askLevel, setAskLevel] = useState(false);
  const [acked, ack] = useMonitoringAck();
  const engine = useRef<AlbumEngine | null>(null);
  const signature = items.map((i) => `${i.url}@${i.startS}`).join("|");
  const sampleRate = album.tracks.find((t) => t.master?.sampleRateHz)?.master?.sampleRateHz ?? null;

  useEffect(() => {
    const e = new AlbumEngine(items, album.durationS, sampleRate, (t, p) => {
      setTimeS(t);
      setPlaying(p);
    }, setError);
    engine.current = e;
    return () => e.close();
    // A new set of masters or gaps is a new timeline.
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [signature, album.durationS, sampleRate]);

  const current = items.findLastIndex((it) => it.startS <= timeS + 1e-6);
  const inGap = current >= 0 && timeS > items[current].startS + items[current].durationS;
  const start = () => {
    setError(null);
    void engine.current?.play();
  };
  const toggle = () => {
    if (playing) engine.current?.pause();
    else if (!acked) setAskLevel(true);
    else start();
  };

  return (
    <section className="card space-y-3 p-4" aria-label="Album player" data-testid="album-player" data-album-time={timeS.toFixed(2)} data-playing={playing ? "true" : "false"} data-track-index={current}>
      <div className="flex flex-wrap items-center gap-3">
        <button type="button" className="btn-primary" onClick={toggle}>
          {playing ? "Pause" : "Play the album"}
        </button>
        <span className="num text-sm" aria-live="off">
          <span data-testid="album-clock">{formatClock(timeS)}</span> / {formatClock(album.durationS)}
        </span>
        <span className="text-sm text-ink-soft">
          {current >= 0 ? (inGap ? `gap before “${items[current + 1]?.title ?? ""}”` : `${current + 1}. ${items[current].title}`) : ""}
        </span>
      </div>
      {askLevel && (
        <MonitoringNotice
          onConfirm={() => {
            ack();
            setAskLevel(false);
            start();
          }}
          onCancel={() => setAskLevel(false)}
        />
      )}
      <label className="block text-xs text-ink-soft">
        Album position
        <input
          type="range"
          min={0}
          max={Math.max(0.1, album.durationS)}
          step={0.1}
          value={Math.min(timeS, album.durationS)}
          onChange={(e) => engine.current?.seek(Number(e.currentTarget.value))}
          className="mt-1 w-full accent-accent"
          data-testid="album-position"
        />
      </label>
      <ol className="flex flex-wrap gap-2 text-xs">
        {items.map((it, i) => (
          <li key={it.url}>
            <button
              type="button"
              data-start-s={it.startS}
              data-end-s={it.startS + it.durationS}
              className={`rounded px-2 py-1 ${i === current && !inGap ? "bg-accent-wash text-accent-deep" : "hover:bg-paper-deep"}`}
              onClick={() => engine.current?.seek(it.startS)}
            >
              <span className="num">{formatClock(it.startS).replace(/\.\d$/, "")}</span> {it.title}
            </button>
          </li>
        ))}
      </ol>
      {error && (
        <p className="text-sm text-danger" role="alert">
          {error}
        </p>
      )}
      <MonitoringReminder />
    </section>
  );
}
