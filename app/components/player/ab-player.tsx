// The A/B player: two renders (or a render and its mix) fetched, decoded and
// played on one AudioContext clock (see ab-engine.ts), switched instantly by
// button or key, level-matched by default, looped over a chosen region.
// Keys (outside text fields): A and B choose, S switches, Space plays/pauses.
// The state is in the DOM for tests: data-active-source, data-match-gain-db
// (the gain on the source being heard), data-matching, data-playing, data-state.
import { useCallback, useEffect, useRef, useState } from "react";
import { AbEngine, type ContextLike, type Region, type SourceId } from "./ab-engine.ts";
import { formatClock, formatDb } from "./format.ts";
import { playerLevelMatch } from "./match.ts";
import { MonitoringNotice, MonitoringReminder, useMonitoringAck } from "./monitoring-notice.tsx";
import { Waveform, type WaveformComment } from "./waveform.tsx";

export type AbSource = {
  url: string;
  /** Shown on the button, e.g. "Print · chain r4". */
  label: string;
  /** Where the source's 0 s sits on the mix's time axis (a preview's region start). */
  offsetS?: number;
  /** The stored integrated loudness, used when the whole source is compared. */
  integratedLufs?: number | null;
};

export type AbPlayerProps = {
  a: AbSource;
  b: AbSource;
  comments?: WaveformComment[];
  /** Called with the time of a comment marker, or of a click on the waveform. */
  onSeek?: (timeS: number) => void;
  onCommentClick?: (comment: WaveformComment) => void;
  /** The position, at most four times a second while playing (for cursors elsewhere on the page). */
  onPositionChange?: (timeS: number) => void;
  initialLoop?: Region | null;
};

type Loaded = {
  engine: AbEngine;
  ctx: AudioContext;
  channels: Record<SourceId, Float32Array[]>;
  sampleRate: number;
};

type Match = { gainADb: number; gainBDb: number; differenceDb: number; matched: boolean; basis: "whole" | "loop" };

async function decode(ctx: AudioContext, url: string, signal: AbortSignal) {
  const response = await fetch(url, { signal, credentials: "same-origin" });
  if (!response.ok) throw new Error(`could not load the audio (${response.status})`);
  return ctx.decodeAudioData(await response.arrayBuffer());
}

const isTyping = (target: EventTarget | null) =>
  target instanceof HTMLElement && (target.isContentEditable || ["INPUT", "TEXTAREA", "SELECT"].includes(target.tagName));

export function AbPlayer({ a, b, comments = [], onSeek, onCommentClick, onPositionChange, initialLoop = null }: AbPlayerProps) {
  const [status, setStatus] = useState<"loading" | "ready" | "error">("loading");
  const [error, setError] = useState<string | null>(null);
  const loadedRef = useRef<Loaded | null>(null);
  const [loaded, setLoaded] = useState<Loaded | null>(null);
  const [active, setActive] = useState<SourceId>("A");
  const [playing, setPlaying] = useState(false);
  const [positionS, setPositionS] = useState(0);
  const [matching, setMatching] = useState(true);
  const [match, setMatch] = useState<Match | null>(null);
  const [loop, setLoop] = useState<Region | null>(null);
  const [askLevel, setAskLevel] = useState(false);
  const [acked, ack] = useMonitoringAck();
  const reported = useRef({ atMs: 0, timeS: -1 });
  const onPositionRef = useRef(onPositionChange);
  onPositionRef.current = onPositionChange;

  useEffect(() => {
    const now = performance.now();
    const last = reported.current;
    if (last.timeS === positionS || (playing && now - last.atMs < 250)) return;
    reported.current = { atMs: now, timeS: positionS };
    onPositionRef.current?.(positionS);
  }, [positionS, playing]);

  // Fetch and decode both sources, then build the engine on one context.
  useEffect(() => {
    const abort = new AbortController();
    const Ctor = window.AudioContext ?? (window as unknown as { webkitAudioContext?: typeof AudioContext }).webkitAudioContext;
    if (!Ctor) {
      setStatus("error");
      setError("This browser cannot play audio through the Web Audio API.");
      return;
    }
    const ctx = new Ctor();
    setStatus("loading");
    (async () => {
      const [bufA, bufB] = await Promise.all([decode(ctx, a.url, abort.signal), decode(ctx, b.url, abort.signal)]);
      const engine = new AbEngine(ctx as unknown as ContextLike, {
        A: { buffer: bufA, offsetS: a.offsetS ?? 0 },
        B: { buffer: bufB, offsetS: b.offsetS ?? 0 },
      });
      const channelsOf = (buf: AudioBuffer) => Array.from({ length: buf.numberOfChannels }, (_, c) => buf.getChannelData(c));
      const next: Loaded = { engine, ctx, channels: { A: channelsOf(bufA), B: channelsOf(bufB) }, sampleRate: ctx.sampleRate };
      if (abort.signal.aborted) return engine.dispose();
      loadedRef.current = next;
      setLoaded(next);
      setPositionS(engine.span.startS);
      if (initialLoop) setLoop(engine.setLoop(initialLoop));
      setStatus("ready");
    })().catch((e: unknown) => {
      if (abort.signal.aborted) return;
      setStatus("error");
      setError(e instanceof Error ? e.message : String(e));
    });
    return () => {
      abort.abort();
      loadedRef.current?.engine.dispose();
      loadedRef.current = null;
      setLoaded(null);
      void ctx.close().catch(() => {});
    };
    // A new pair of sources is a new player; labels and loudness changes do not reload.
  }, [a.url, b.url, a.offsetS, b.offsetS]); // eslint-disable-line react-hooks/exhaustive-deps

  // Level match over the loop, or over the shared span; measured off the main path of a click.
  useEffect(() => {
    if (!loaded) return;
    const { engine } = loaded;
    const region = loop ?? engine.span;
    const timer = setTimeout(() => {
      const sources = {
        A: { buffer: bufferOf(loaded, "A"), offsetS: a.offsetS ?? 0, integratedLufs: a.integratedLufs },
        B: { buffer: bufferOf(loaded, "B"), offsetS: b.offsetS ?? 0, integratedLufs: b.integratedLufs },
      };
      const m = playerLevelMatch(sources, region);
      engine.setLevelMatch(m.gainADb, m.gainBDb);
      setMatch({ gainADb: m.gainADb, gainBDb: m.gainBDb, differenceDb: m.differenceDb, matched: m.matched, basis: loop ? "loop" : "whole" });
    }, 0);
    return () => clearTimeout(timer);
  }, [loaded, loop, a.integratedLufs, b.integratedLufs, a.offsetS, b.offsetS]);

  // The position bar follows the clock while playing.
  useEffect(() => {
    if (!loaded || !playing) return;
    let frame = 0;
    const tick = () => {
      const { engine } = loaded;
      if (engine.reachedEnd()) {
        engine.pause();
        engine.seek(engine.span.startS);
        setPlaying(false);
        setPositionS(engine.span.startS);
        return;
      }
      setPositionS(engine.positionS());
      frame = requestAnimationFrame(tick);
    };
    frame = requestAnimationFrame(tick);
    return () => cancelAnimationFrame(frame);
  }, [loaded, playing]);

  const choose = useCallback(
    (id: SourceId) => {
      loaded?.engine.setActive(id);
      setActive(id);
    },
    [loaded],
  );

  const startPlayback = useCallback(async () => {
    if (!loaded) return;
    await loaded.engine.play();
    setPlaying(true);
  }, [loaded]);

  const playPause = useCallback(() => {
    if (!loaded) return;
    if (loaded.engine.playing) {
      loaded.engine.pause();
      setPlaying(false);
      setPositionS(loaded.engine.positionS());
    } else if (!acked) {
      setAskLevel(true);
    } else {
      void startPlayback();
    }
  }, [loaded, acked, startPlayback]);

  const seek = useCallback(
    (timeS: number) => {
      if (!loaded) return;
      loaded.engine.seek(timeS);
      setPositionS(loaded.engine.positionS());
    },
    [loaded],
  );

  const chooseLoop = useCallback(
    (region: Region | null) => {
      if (!loaded) return;
      setLoop(loaded.engine.setLoop(region));
      setPositionS(loaded.engine.positionS());
    },
    [loaded],
  );

  useEffect(() => {
    const onKey = (e: KeyboardEvent) => {
      if (e.ctrlKey || e.metaKey || e.altKey || isTyping(e.target) || !loaded) return;
      const key = e.key.toLowerCase();
      if (key === "a") choose("A");
      else if (key === "b") choose("B");
      else if (key === "s") choose(loaded.engine.active === "A" ? "B" : "A");
      else if (key === " " && !(e.target instanceof HTMLButtonElement)) playPause();
      else return;
      e.preventDefault();
    };
    window.addEventListener("keydown", onKey);
    return () => window.removeEventListener("keydown", onKey);
  }, [loaded, choose, playPause]);

  const appliedDb = match && matching ? (active === "A" ? match.gainADb : match.gainBDb) : 0;
  const span = loaded?.engine.span ?? { startS: 0, endS: 1 };
  const heard = active === "A" ? a : b;

  return (
    <section
      className="card space-y-3 p-4"
      aria-label="A/B comparison"
      data-testid="ab-player"
      data-state={status}
      data-active-source={active}
      data-match-gain-db={appliedDb.toFixed(2)}
      data-matching={matching ? "on" : "off"}
      data-playing={playing ? "true" : "false"}
      data-position-s={positionS.toFixed(2)}
    >
      <MonitoringReminder />
      {askLevel && (
        <MonitoringNotice
          onConfirm={() => {
            ack();
            setAskLevel(false);
            void startPlayback();
          }}
          onCancel={() => setAskLevel(false)}
        />
      )}
      {status === "error" && (
        <p role="alert" className="rounded-md bg-danger-wash px-3 py-2 text-sm text-danger">
          The player could not start: {error}
        </p>
      )}

      <div className="flex flex-wrap items-center gap-2">
        <button type="button" className="btn-primary w-28" onClick={playPause} disabled={status !== "ready"} aria-keyshortcuts="Space">
          {playing ? "Pause" : "Play"}
        </button>
        <div role="group" aria-label="Source" className="inline-flex overflow-hidden rounded-md border border-rule">
          {(["A", "B"] as const).map((id) => (
            <button
              key={id}
              type="button"
              aria-pressed={active === id}
              aria-keyshortcuts={id}
              disabled={status !== "ready"}
              onClick={() => choose(id)}
              className={`px-4 py-2 text-sm ${active === id ? "bg-ink text-card" : "bg-card text-ink hover:bg-paper-deep"}`}
            >
              <span className="num font-semibold">{id}</span> <span className="text-xs">{(id === "A" ? a : b).label}</span>
            </button>
          ))}
        </div>
        <button type="button" className="btn-quiet" onClick={() => choose(active === "A" ? "B" : "A")} disabled={status !== "ready"} aria-keyshortcuts="S">
          Switch <kbd className="num text-xs text-ink-faint">S</kbd>
        </button>
        <span className="num ml-auto text-sm text-ink" aria-live="off">
          {formatClock(positionS)} <span className="text-ink-faint">/ {formatClock(span.endS)}</span>
        </span>
      </div>

      {status === "loading" && <p className="text-sm text-ink-soft">Loading both sources…</p>}
      {loaded && (
        <Waveform
          channels={loaded.channels[active]}
          sampleRate={loaded.sampleRate}
          offsetS={heard.offsetS ?? 0}
          span={span}
          positionS={positionS}
          loop={loop}
          comments={comments}
          onSeek={(t) => {
            seek(t);
            onSeek?.(t);
          }}
          onSelectRegion={(r) => chooseLoop(r)}
          onCommentClick={onCommentClick}
        />
      )}
      <input
        type="range"
        aria-label="Position"
        className="w-full accent-[var(--color-accent)]"
        min={span.startS}
        max={span.endS}
        step={0.01}
        value={Math.min(Math.max(positionS, span.startS), span.endS)}
        disabled={status !== "ready"}
        onChange={(e) => seek(Number(e.currentTarget.value))}
      />

      <div className="flex flex-wrap items-center gap-x-6 gap-y-2 text-sm">
        <label className="inline-flex items-center gap-2">
          <input
            type="checkbox"
            checked={matching}
            onChange={(e) => {
              const on = e.currentTarget.checked;
              loaded?.engine.setMatching(on);
              setMatching(on);
            }}
          />
          Level matching
        </label>
        <span className="num text-ink" data-testid="match-gain">
          {match === null
            ? "measuring…"
            : !match.matched
              ? "no gain (a source is silent)"
              : `A ${formatDb(matching ? match.gainADb : 0)} · B ${formatDb(matching ? match.gainBDb : 0)}`}
        </span>
        {match?.matched && (
          <span className="text-xs text-ink-soft">
            A is <span className="num">{Math.abs(match.differenceDb).toFixed(1)} LU</span> {match.differenceDb >= 0 ? "louder" : "quieter"} than B
            {match.basis === "loop" ? " in the loop" : ""}
          </span>
        )}
        <span className="ml-auto inline-flex items-center gap-2">
          {loop ? (
            <>
              <span className="num text-ink" data-testid="loop-region">
                Loop {formatClock(loop.startS)} – {formatClock(loop.endS)}
              </span>
              <button type="button" className="btn-quiet" onClick={() => chooseLoop(null)}>
                Stop looping
              </button>
            </>
          ) : (
            <span className="text-xs text-ink-soft">Drag across the waveform to loop a region.</span>
          )}
        </span>
      </div>
      <p className="text-xs text-ink-faint">
        Keys: <kbd className="num">A</kbd> / <kbd className="num">B</kbd> choose, <kbd className="num">S</kbd> switches, <kbd className="num">Space</kbd> plays
        or pauses.
      </p>
    </section>
  );
}

function bufferOf(loaded: Loaded, id: SourceId) {
  const channels = loaded.channels[id];
  const length = channels[0]?.length ?? 0;
  return {
    duration: length / loaded.sampleRate,
    sampleRate: loaded.sampleRate,
    numberOfChannels: channels.length,
    length,
    getChannelData: (c: number) => channels[c],
  };
}
