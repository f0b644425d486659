// The waveform overview: peaks of the heard source drawn on a canvas over the
// shared span, with the loop region, the play cursor and comment markers.
// A click seeks; a drag across the waveform chooses a loop region.
import { useEffect, useMemo, useRef, useState, type PointerEvent as ReactPointerEvent } from "react";
import type { Region } from "./ab-engine.ts";
import { formatClock } from "./format.ts";
import { computePeaks } from "./peaks.ts";

export type WaveformComment = { id: string; timeS: number; body?: string; resolved?: boolean };

/** Peaks computed by the worker and stored (dsp/render/waveform-peaks.ts), placed on the mix's time axis; values −127…127. */
export type StoredPeaks = { startS: number; endS: number; min: number[]; max: number[] };

/** Stored peaks over a span, resampled to the canvas's columns (the extremes of the stored columns each covers). */
export function peaksFromStored(stored: StoredPeaks, span: Region, columns: number): { min: Float32Array; max: Float32Array } {
  const min = new Float32Array(columns);
  const max = new Float32Array(columns);
  const n = stored.min.length;
  const perS = n / Math.max(1e-9, stored.endS - stored.startS);
  const spanS = span.endS - span.startS;
  for (let c = 0; c < columns; c++) {
    const fromS = span.startS + (c / columns) * spanS;
    const toS = span.startS + ((c + 1) / columns) * spanS;
    const a = Math.max(0, Math.floor((fromS - stored.startS) * perS));
    const b = Math.min(n, Math.max(a + 1, Math.ceil((toS - stored.startS) * perS)));
    let lo = 0;
    let hi = 0;
    for (let i = a; i < b; i++) {
      if (stored.min[i] < lo) lo = stored.min[i];
      if (stored.max[i] > hi) hi = stored.max[i];
    }
    min[c] = lo / 127;
    max[c] = hi / 127;
  }
  return { min, max };
}

export type WaveformProps = {
  /** Decoded channels of the source to draw, its sample rate, and where its 0 s sits on the mix axis. */
  channels: Float32Array[] | null;
  sampleRate: number;
  offsetS: number;
  span: Region;
  positionS: number;
  loop: Region | null;
  comments?: WaveformComment[];
  onSeek: (timeS: number) => void;
  onSelectRegion: (region: Region) => void;
  onCommentClick?: (comment: WaveformComment) => void;
  heightPx?: number;
  /** Stored peaks of the source: drawn instead of peaks of the decoded audio (which may be only its start). */
  storedPeaks?: StoredPeaks | null;
};

// Colours from the theme of app/app.css, with the same values as fallbacks for a page without it.
function themeColours(el: Element) {
  const css = getComputedStyle(el);
  const v = (name: string, fallback: string) => css.getPropertyValue(name).trim() || fallback;
  return {
    ground: v("--color-paper-deep", "#ebe6da"),
    ink: v("--color-ink-soft", "#4a4d55"),
    rule: v("--color-rule", "#d9d3c4"),
    accent: v("--color-accent", "#0e5f6b"),
    wash: v("--color-accent-wash", "#dcebea"),
  };
}

const DRAG_MIN_PX = 4;

export function Waveform({ channels, sampleRate, offsetS, span, positionS, loop, comments = [], onSeek, onSelectRegion, onCommentClick, heightPx = 96, storedPeaks = null }: WaveformProps) {
  const wrapRef = useRef<HTMLDivElement>(null);
  const canvasRef = useRef<HTMLCanvasElement>(null);
  const [widthPx, setWidthPx] = useState(0);
  const [drag, setDrag] = useState<{ fromPx: number; toPx: number } | null>(null);
  const lengthS = span.endS - span.startS;

  useEffect(() => {
    const el = wrapRef.current;
    if (!el) return;
    const observer = new ResizeObserver(([entry]) => setWidthPx(Math.floor(entry.contentRect.width)));
    observer.observe(el);
    return () => observer.disconnect();
  }, []);

  const peaks = useMemo(() => {
    if (widthPx <= 0) return null;
    if (storedPeaks) return peaksFromStored(storedPeaks, span, widthPx);
    if (!channels) return null;
    return computePeaks(channels, (span.startS - offsetS) * sampleRate, (span.endS - offsetS) * sampleRate, widthPx);
  }, [channels, widthPx, span.startS, span.endS, offsetS, sampleRate, storedPeaks]); // eslint-disable-line react-hooks/exhaustive-deps

  const xOf = (timeS: number) => ((timeS - span.startS) / lengthS) * widthPx;
  const timeOf = (px: number) => span.startS + (Math.min(Math.max(px, 0), widthPx) / Math.max(1, widthPx)) * lengthS;

  useEffect(() => {
    const canvas = canvasRef.current;
    if (!canvas || widthPx <= 0) return;
    const dpr = window.devicePixelRatio || 1;
    canvas.width = Math.round(widthPx * dpr);
    canvas.height = Math.round(heightPx * dpr);
    const g = canvas.getContext("2d");
    if (!g) return;
    g.setTransform(dpr, 0, 0, dpr, 0, 0);
    const c = themeColours(canvas);
    g.fillStyle = c.ground;
    g.fillRect(0, 0, widthPx, heightPx);
    const shown = drag ? { startS: timeOf(Math.min(drag.fromPx, drag.toPx)), endS: timeOf(Math.max(drag.fromPx, drag.toPx)) } : loop;
    if (shown) {
      g.fillStyle = c.wash;
      g.fillRect(xOf(shown.startS), 0, xOf(shown.endS) - xOf(shown.startS), heightPx);
    }
    const mid = heightPx / 2;
    g.strokeStyle = c.rule;
    g.beginPath();
    g.moveTo(0, mid + 0.5);
    g.lineTo(widthPx, mid + 0.5);
    g.stroke();
    if (peaks) {
      g.fillStyle = c.ink;
      for (let x = 0; x < peaks.min.length; x++) {
        const top = mid - peaks.max[x] * (mid - 2);
        const bottom = mid - peaks.min[x] * (mid - 2);
        g.fillRect(x, top, 1, Math.max(1, bottom - top));
      }
    }
    g.fillStyle = c.accent;
    g.fillRect(Math.round(xOf(positionS)) - 1, 0, 2, heightPx);
    // xOf/timeOf depend only on span and width, listed here.
  }, [peaks, widthPx, heightPx, positionS, loop, drag, span.startS, span.endS]); // eslint-disable-line react-hooks/exhaustive-deps

  const localX = (e: ReactPointerEvent<HTMLCanvasElement>) => e.clientX - e.currentTarget.getBoundingClientRect().left;

  return (
    <div className="min-w-0 select-none" ref={wrapRef} style={{ position: "relative", height: heightPx + 18, maxWidth: "100%" }}>
      <canvas
        ref={canvasRef}
        data-testid="waveform"
        data-peaks={peaks ? (storedPeaks ? "stored" : "decoded") : "none"}
        className="block w-full cursor-crosshair rounded-sm"
        style={{ height: heightPx, marginTop: 18, width: "100%", maxWidth: "100%" }}
        aria-label={`Waveform from ${formatClock(span.startS)} to ${formatClock(span.endS)}; click to move the playhead, drag to choose a loop`}
        role="img"
        onPointerDown={(e) => {
          e.currentTarget.setPointerCapture(e.pointerId);
          const x = localX(e);
          setDrag({ fromPx: x, toPx: x });
        }}
        onPointerMove={(e) => drag && setDrag({ ...drag, toPx: localX(e) })}
        onPointerUp={(e) => {
          if (!drag) return;
          const to = localX(e);
          setDrag(null);
          if (Math.abs(to - drag.fromPx) < DRAG_MIN_PX) onSeek(timeOf(to));
          else onSelectRegion({ startS: timeOf(Math.min(drag.fromPx, to)), endS: timeOf(Math.max(drag.fromPx, to)) });
        }}
        onPointerCancel={() => setDrag(null)}
      />
      {comments
        .filter((cm) => cm.timeS >= span.startS && cm.timeS <= span.endS)
        .map((cm) => (
          <button
            key={cm.id}
            type="button"
            className={`rounded-sm border ${cm.resolved ? "border-rule bg-card" : "border-accent bg-accent"}`}
            // Layout inline: the marker must sit over its time whatever stylesheet the page has.
            style={{ position: "absolute", top: 0, width: 12, height: 16, left: (widthPx ? xOf(cm.timeS) : 0) - 6, padding: 0 }}
            title={`${formatClock(cm.timeS)}${cm.body ? ` — ${cm.body}` : ""}`}
            aria-label={`Comment at ${formatClock(cm.timeS)}${cm.resolved ? " (resolved)" : ""}`}
            data-comment-marker={cm.id}
            data-time-s={cm.timeS}
            onClick={() => {
              onSeek(cm.timeS);
              onCommentClick?.(cm);
            }}
          />
        ))}
    </div>
  );
}
