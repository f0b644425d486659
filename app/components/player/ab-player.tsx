// The A/B player: two sources (renders, mixes) fetched, decoded and played on
// one AudioContext clock (see ab-engine.ts), switched instantly by button or
// key, level-matched by default, looped over a chosen region. Loading is
// progressive (progressive-wav.ts): play may begin once the first seconds of
// the span both share are decoded; the rest is swapped in as it arrives.
// Keys (outside text fields): A and B choose, S switches, Space plays/pauses.
// The state is in the DOM for tests: data-active-source, data-match-gain-db
// (the gain on the source being heard), data-matching, data-playing,
// data-state, data-loaded (partial/full) and data-ready-ms (from mount to
// ready to play).
import { useCallback, useEffect, useRef, useState } from "react";
import { AbEngine, type ContextLike, type Region, type SourceId } from "./ab-engine.ts";
import { openPair, type LoadedPart } from "./progressive-wav.ts";
import { formatClock, formatDb } from "./format.ts";
import { playerLevelMatch } from "./match.ts";
import { MonitoringNotice, MonitoringReminder, useMonitoringAck } from "./monitoring-notice.tsx";
import { Waveform, type StoredPeaks, type WaveformComment } from "./waveform.tsx";

export type AbSource = {
  url: string;
  /** Shown on the button, e.g. "Print · chain r4". */
  label: string;
  /** Where the source's 0 s sits on the mix's time axis (a preview's region start). */
  offsetS?: number;
  /** The stored integrated loudness, used when the whole source is compared. */
  integratedLufs?: number | null;
  /** Peaks stored by the worker: the waveform is drawn from these, whole, before the audio has loaded. */
  peaks?: StoredPeaks | null;
};

/** What a page may ask of the player: play from a time (through the safe-level confirmation). */
export type PlayerControl = { playFrom: (timeS: number) => void };

export type AbPlayerProps = {
  a: AbSource;
  /** Absent: the player plays `a` alone (no source switch). */
  b?: AbSource | null;
  /** Plain words for a listener: no A/B letters, key hints or gain figures (the review room). */
  plain?: boolean;
  /** Filled with the player's controls once it is ready. */
  controlRef?: { current: PlayerControl | null };
  /** Called once the player is ready, with its controls. */
  onReady?: (control: PlayerControl) => void;
  comments?: WaveformComment[];
  /** Called with the time of a comment marker, or of a click on the waveform. */
  onSeek?: (timeS: number) => void;
  onCommentClick?: (comment: WaveformComment) => void;
  /** The position, at most four times a second while playing (for cursors elsewhere on the page). */
  onPositionChange?: (timeS: number) => void;
  /** The loop region as it is set or cleared (e.g. to zoom the traces to it). */
  onLoopChange?: (loop: Region | null) => void;
  initialLoop?: Region | null;
};

type Part = LoadedPart & { channels: Float32Array[] };

type Loaded = {
  engine: AbEngine;
  ctx: AudioContext;
  parts: Record<SourceId, Part>;
  sampleRate: number;
};

type Match = { gainADb: number; gainBDb: number; differenceDb: number; matched: boolean; basis: "whole" | "loop"; provisional: boolean };

const withChannels = (part: LoadedPart): Part => ({
  ...part,
  channels: Array.from({ length: part.buffer.numberOfChannels }, (_, c) => part.buffer.getChannelData(c)),
});

const isTyping = (target: EventTarget | null) =>
  target instanceof HTMLElement && (target.isContentEditable || ["INPUT", "TEXTAREA", "SELECT"].includes(target.tagName));

export function AbPlayer({ a, b: bGiven = null, plain = false, controlRef, onReady, comments = [], onSeek, onCommentClick, onPositionChange, onLoopChange, initialLoop = null }: AbPlayerProps) {
  // One source alone is played as both A and B (fetched once, see openPair): one engine for every player.
  const alone = bGiven === null;
  const b = bGiven ?? a;
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
  const [readyMs, setReadyMs] = useState<number | null>(null);
  // Playback that ran up to the end of what is decoded, waiting for the rest.
  const waitingRef = useRef(false);
  const [waiting, setWaiting] = useState(false);
  const [acked, ack] = useMonitoringAck();
  const reported = useRef({ atMs: 0, timeS: -1 });
  const onPositionRef = useRef(onPositionChange);
  onPositionRef.current = onPositionChange;
  const onLoopRef = useRef(onLoopChange);
  onLoopRef.current = onLoopChange;
  useEffect(() => onLoopRef.current?.(loop), [loop]);

  useEffect(() => {
    const now = performance.now();
    const last = reported.current;
    if (last.timeS === positionS || (playing && now - last.atMs < 250)) return;
    reported.current = { atMs: now, timeS: positionS };
    onPositionRef.current?.(positionS);
  }, [positionS, playing]);

  // Open both sources (headers, then the first seconds), build the engine on one context, swap in the rest as it arrives.
  useEffect(() => {
    const abort = new AbortController();
    const Ctor = window.AudioContext ?? (window as unknown as { webkitAudioContext?: typeof AudioContext }).webkitAudioContext;
    if (!Ctor) {
      setStatus("error");
      setError("This browser cannot play audio through the Web Audio API.");
      return;
    }
    const ctx = new Ctor();
    const startedMs = performance.now();
    setStatus("loading");
    (async () => {
      const opened = await openPair(
        { A: { url: a.url, offsetS: a.offsetS ?? 0 }, B: { url: b.url, offsetS: b.offsetS ?? 0 } },
        { fetch: (url, init) => fetch(url, init), decode: (wav) => ctx.decodeAudioData(wav), signal: abort.signal },
      );
      if (abort.signal.aborted) return;
      const engine = new AbEngine(
        ctx as unknown as ContextLike,
        { A: { buffer: opened.first.A.buffer, offsetS: opened.first.A.offsetS }, B: { buffer: opened.first.B.buffer, offsetS: opened.first.B.offsetS } },
        opened.span,
      );
      const next: Loaded = { engine, ctx, parts: { A: withChannels(opened.first.A), B: withChannels(opened.first.B) }, sampleRate: ctx.sampleRate };
      loadedRef.current = next;
      setLoaded(next);
      setPositionS(engine.span.startS);
      if (initialLoop) setLoop(engine.setLoop(initialLoop));
      setReadyMs(Math.round(performance.now() - startedMs));
      setStatus("ready");
      for (const id of ["A", "B"] as const) {
        opened.rest[id]
          ?.then(async (part) => {
            if (abort.signal.aborted) return;
            engine.replaceBuffer(id, part.buffer);
            setLoaded((prev) => (prev && prev.engine === engine ? { ...prev, parts: { ...prev.parts, [id]: withChannels(part) } } : prev));
            if (waitingRef.current && !engine.partial()) {
              waitingRef.current = false;
              setWaiting(false);
              await engine.play();
              setPlaying(true);
            }
          })
          .catch((e: unknown) => {
            if (abort.signal.aborted) return;
            // What is decoded still plays; the rest could not be fetched.
            setError(`the rest of ${id} could not be loaded: ${e instanceof Error ? e.message : String(e)}`);
          });
      }
    })().catch((e: unknown) => {
      if (abort.signal.aborted) return;
      setStatus("error");
      setError(e instanceof Error ? e.message : String(e));
    });
    return () => {
      abort.abort();
      loadedRef.current?.engine.dispose();
      loadedRef.current = null;
      waitingRef.current = false;
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
      const { A, B } = loaded.parts;
      const sources = {
        A: { buffer: A.buffer, offsetS: A.offsetS, whole: A.whole, integratedLufs: a.integratedLufs },
        B: { buffer: B.buffer, offsetS: B.offsetS, whole: B.whole, integratedLufs: b.integratedLufs },
      };
      const m = playerLevelMatch(sources, region);
      engine.setLevelMatch(m.gainADb, m.gainBDb);
      // Measured on decoded audio that does not yet cover the region: measured again when the rest arrives.
      const provisional = (m.aLufs !== a.integratedLufs || m.bLufs !== b.integratedLufs) && engine.availableEndS() < region.endS - 1e-3;
      setMatch({ gainADb: m.gainADb, gainBDb: m.gainBDb, differenceDb: m.differenceDb, matched: m.matched, basis: loop ? "loop" : "whole", provisional });
    }, 0);
    return () => clearTimeout(timer);
  }, [loaded, loop, a.integratedLufs, b.integratedLufs, a.offsetS, b.offsetS]);

  // The position bar follows the clock while playing.
  useEffect(() => {
    if (!loaded || !playing) return;
    let frame = 0;
    const tick = () => {
      const { engine } = loaded;
      if (engine.starved()) {
        // Ran up to the end of what is decoded: wait for the rest, then go on from here.
        engine.pause();
        // The frame that noticed may be a few ms past the end: back to the last decoded moment.
        engine.seek(engine.positionS());
        waitingRef.current = true;
        setWaiting(true);
        setPlaying(false);
        setPositionS(engine.positionS());
        return;
      }
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
    if (waitingRef.current) {
      waitingRef.current = false;
      setWaiting(false);
    } else if (loaded.engine.playing) {
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

  // Play from a time (a comment's): seek, then play — after the safe-level confirmation if not given yet.
  const playFrom = useCallback(
    (timeS: number) => {
      if (!loaded) return;
      seek(timeS);
      if (loaded.engine.playing) return;
      if (!acked) setAskLevel(true);
      else void startPlayback();
    },
    [loaded, seek, acked, startPlayback],
  );
  useEffect(() => {
    if (controlRef) controlRef.current = loaded ? { playFrom } : null;
  }, [controlRef, loaded, playFrom]);
  const onReadyRef = useRef(onReady);
  onReadyRef.current = onReady;
  // Once per engine (not again when the confirmation or the position changes playFrom).
  const readyFor = useRef<AbEngine | null>(null);
  useEffect(() => {
    if (!loaded || readyFor.current === loaded.engine) return;
    readyFor.current = loaded.engine;
    onReadyRef.current?.({ playFrom });
  }, [loaded, playFrom]);

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
      if (key === "a" && !plain) choose("A");
      else if (key === "b" && !plain && !alone) choose("B");
      else if (key === "s" && !alone) choose(loaded.engine.active === "A" ? "B" : "A");
      else if (key === " " && !(e.target instanceof HTMLButtonElement)) playPause();
      else return;
      e.preventDefault();
    };
    window.addEventListener("keydown", onKey);
    return () => window.removeEventListener("keydown", onKey);
  }, [loaded, choose, playPause, plain, alone]);

  const appliedDb = match && matching ? (active === "A" ? match.gainADb : match.gainBDb) : 0;
  const span = loaded?.engine.span ?? { startS: 0, endS: 1 };
  const heardPart = loaded?.parts[active] ?? null;
  const partial = loaded ? !loaded.parts.A.complete || !loaded.parts.B.complete : false;
  const availableEndS = loaded?.engine.availableEndS() ?? span.endS;

  return (
    <section
      className="card max-w-full min-w-0 space-y-3 overflow-hidden p-4"
      aria-label={alone ? "Player" : plain ? "Versions side by side" : "A/B comparison"}
      data-testid="ab-player"
      data-state={status}
      data-active-source={active}
      data-match-gain-db={appliedDb.toFixed(2)}
      data-matching={matching ? "on" : "off"}
      data-playing={playing ? "true" : "false"}
      data-position-s={positionS.toFixed(2)}
      data-loaded={loaded ? (partial ? "partial" : "full") : "none"}
      data-ready-ms={readyMs ?? undefined}
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
        {!alone && (
          <div role="group" aria-label={plain ? "Version" : "Source"} className="inline-flex max-w-full overflow-hidden rounded-md border border-rule">
            {(["A", "B"] as const).map((id) => (
              <button
                key={id}
                type="button"
                aria-pressed={active === id}
                aria-keyshortcuts={plain ? undefined : id}
                disabled={status !== "ready"}
                onClick={() => choose(id)}
                data-source={id}
                className={`px-3 py-2 text-sm ${active === id ? "bg-ink text-card" : "bg-card text-ink hover:bg-paper-deep"}`}
              >
                {!plain && <span className="num font-semibold">{id} </span>}
                <span className={plain ? "" : "text-xs"}>{(id === "A" ? a : b).label}</span>
              </button>
            ))}
          </div>
        )}
        {!alone && !plain && (
          <button type="button" className="btn-quiet" onClick={() => choose(active === "A" ? "B" : "A")} disabled={status !== "ready"} aria-keyshortcuts="S">
            Switch <kbd className="num text-xs text-ink-faint">S</kbd>
          </button>
        )}
        <span className="num ml-auto text-sm text-ink" aria-live="off" data-testid="player-clock">
          {formatClock(positionS)} <span className="text-ink-faint">/ {formatClock(span.endS)}</span>
        </span>
      </div>

      {status === "loading" && <p className="text-sm text-ink-soft">Loading the start of both sources…</p>}
      {status === "ready" && partial && (
        <p className="text-xs text-ink-soft" data-testid="loading-rest">
          {waiting ? "Waiting for the rest of the audio…" : `Loading the rest: playable up to ${formatClock(availableEndS)} so far.`}
        </p>
      )}
      {loaded && (
        <Waveform
          channels={heardPart!.channels}
          sampleRate={loaded.sampleRate}
          offsetS={heardPart!.offsetS}
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
          storedPeaks={(active === "A" ? a : b).peaks ?? null}
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

      {plain ? (
        <div className="flex flex-wrap items-center gap-x-6 gap-y-2 text-sm">
          {!alone && (
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
              Same loudness for both versions
            </label>
          )}
          {loop ? (
            <span className="inline-flex items-center gap-2">
              <span className="num text-ink" data-testid="loop-region">
                Repeating {formatClock(loop.startS)} – {formatClock(loop.endS)}
              </span>
              <button type="button" className="btn-quiet" onClick={() => chooseLoop(null)}>
                Stop repeating
              </button>
            </span>
          ) : (
            <span className="text-xs text-ink-soft">Click the waveform to pick a moment; drag across it to repeat a stretch.</span>
          )}
        </div>
      ) : (
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
            {match.provisional ? " (so far: measured on what has loaded)" : ""}
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
      )}
      {!plain && (
      <p className="text-xs text-ink-faint">
        Keys: <kbd className="num">A</kbd> / <kbd className="num">B</kbd> choose, <kbd className="num">S</kbd> switches, <kbd className="num">Space</kbd> plays
        or pauses.
      </p>
      )}
    </section>
  );
}
