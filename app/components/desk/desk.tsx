// The listening desk: a chain (one revision of it) heard live on a region of
// one mix version, through the same dsp/ code that prints it. The chain runs
// down one side, each stage a strip with Bypass, Push and its gain reduction,
// the selected one open with every parameter as a live control; the
// transport, the curves, the meters and what goes to the record sit beside
// it. The engine (app/desk/engine/) is loaded when Listen is first pressed,
// after the safe-level confirmation.
import { useCallback, useEffect, useMemo, useRef, useState } from "react";
import { Link, useFetcher, useSearchParams } from "react-router";
import { STAGE_TYPES } from "../../../dsp/chain/fields.ts";
import type { Chain, CompressStage, EqBand, LimitStage, MultibandStage } from "../../../dsp/chain/schema.ts";
import { STAGE_LABELS } from "../chain/labels.ts";
import { newStage } from "../chain/stage-defaults.ts";
import { MonitoringNotice, MonitoringReminder, useMonitoringAck } from "../player/monitoring-notice.tsx";
import { DESK_MAX_REGION_S } from "../../schemas/desk.ts";
import { checkChain, setAt, soloedBands, withoutSolo, type EditableChain, type Json, type Path } from "./chain-state.ts";
import { CompressorCurve, EqCurve, LimiterHistory, MultibandCurve } from "./curves.tsx";
import { loadDeskEngine, type DeskEngineHandle, type DeskRegion } from "./load-engine.ts";
import { MeterStore, useMeters } from "./meter-store.ts";
import { MatchOffset, OutputMeters, Position } from "./meters.tsx";
import { StageStrip, ToggleButton, type Ctx } from "./stage-panel.tsx";
import { fmtClock } from "./format.ts";

export type DeskMixView = { id: string; version: number; label: string; durationS: number; sampleRateHz: number; channels: number; audioUrl: string; analysed: boolean };
export type DeskRevisionView = { id: string; revision: number; authorName: string | null; createdAt: string; params: EditableChain };

/** What each stage's Push does, for the help text (the engine's own words when it has them). */
const PUSH_FALLBACK: Record<string, string> = {
  trim: "exaggerates the gain",
  eq: "exaggerates every band's gain",
  saturate: "drives the saturation harder",
  compress: "lowers the threshold",
  multiband: "lowers every band's threshold",
  limit: "drives more level into the limiter",
};

type EngineState = { status: "idle" } | { status: "loading"; fraction: number } | { status: "ready"; playing: boolean } | { status: "error"; message: string };

export type DeskProps = {
  chainId: string;
  opened: { id: string; revision: number; params: EditableChain } | null;
  revisions: DeskRevisionView[];
  mixes: DeskMixView[];
  mix: DeskMixView | null;
  region: { startS: number; endS: number; loudest: boolean } | null;
  serverErrors: Record<string, string>;
  formError?: string;
  saved: string | null;
};

type RenderResult = { render?: { id: string; kind: string; revision: number; created: boolean; url: string }; errors?: Record<string, string>; formError?: string };

export function Desk({ chainId, opened, revisions, mixes, mix, region: defaultRegion, serverErrors, formError, saved }: DeskProps) {
  const [chain, setChain] = useState<EditableChain>(() => ({ stages: opened?.params.stages ?? [], output: opened?.params.output ?? {} }));
  // A revision opened (or just saved) becomes the settings.
  useEffect(() => {
    if (opened) setChain({ stages: opened.params.stages ?? [], output: opened.params.output ?? {} });
  }, [opened?.id]); // eslint-disable-line react-hooks/exhaustive-deps
  const [selected, setSelected] = useState(0);
  const [pushed, setPushed] = useState<ReadonlySet<number>>(new Set());
  const [bypassAll, setBypassAll] = useState(false);
  const [match, setMatch] = useState(true);
  const [compareRevision, setCompareRevision] = useState<number | null>(null);
  const [listening, setListening] = useState<"current" | "compare">("current");
  const [region, setRegion] = useState<DeskRegion | null>(defaultRegion ? { startS: defaultRegion.startS, endS: defaultRegion.endS } : null);
  const [regionText, setRegionText] = useState({ start: defaultRegion?.startS.toFixed(1) ?? "", end: defaultRegion?.endS.toFixed(1) ?? "" });
  const [regionError, setRegionError] = useState<string | null>(null);
  const [engineState, setEngineState] = useState<EngineState>({ status: "idle" });
  const [acked, ack] = useMonitoringAck();
  const [asking, setAsking] = useState(false);
  const [soloQuestion, setSoloQuestion] = useState<null | "save" | "preview" | "print">(null);
  const [addType, setAddType] = useState<string>("compress");
  const [pushHelp, setPushHelp] = useState<Record<string, string>>(PUSH_FALLBACK);
  const engine = useRef<DeskEngineHandle | null>(null);
  const store = useMemo(() => new MeterStore(), []);
  const [, setSearchParams] = useSearchParams();
  const saver = useFetcher<{ errors?: Record<string, string>; formError?: string }>();
  const renderer = useFetcher<RenderResult>();

  // The server's answer to the last save or render, until the next edit or the next saved revision
  // (a fetcher keeps its last data when a later submission redirects).
  const [answer, setAnswer] = useState<{ errors: Record<string, string>; formError?: string }>({ errors: serverErrors, formError });
  useEffect(() => {
    if (saver.data) setAnswer({ errors: saver.data.errors ?? {}, formError: saver.data.formError });
  }, [saver.data]);
  useEffect(() => {
    if (renderer.data) setAnswer({ errors: renderer.data.errors ?? {}, formError: renderer.data.formError });
  }, [renderer.data]);
  useEffect(() => setAnswer({ errors: {} }), [saved, opened?.id]);
  const checked = useMemo(() => checkChain(chain), [chain]);
  const errors = { ...(checked.ok ? {} : checked.errors), ...answer.errors };
  const heard = useRef<Chain | null>(checked.ok ? checked.chain : null);
  if (checked.ok) heard.current = checked.chain;
  const limiterIndex = chain.stages.map((s) => s.type).lastIndexOf("limit");
  const sampleRate = engine.current?.sampleRate ?? mix?.sampleRateHz ?? 48000;

  const ctx: Ctx = {
    errors,
    set: (path: Path, value: unknown) => {
      setChain((c) => setAt(c, path, value));
      if (Object.keys(answer.errors).length > 0 || answer.formError) setAnswer({ errors: {} });
    },
  };

  // Every valid change reaches the engine at once (it glides there).
  useEffect(() => {
    if (checked.ok) engine.current?.setChain(checked.chain);
  }, [checked]);
  useEffect(() => engine.current?.setMatch(match), [match]);
  useEffect(() => engine.current?.setBypassAll(bypassAll), [bypassAll]);
  const compareChain = useMemo(() => {
    const rev = revisions.find((r) => r.revision === compareRevision);
    if (!rev) return null;
    const parsed = checkChain(rev.params);
    return parsed.ok ? parsed.chain : null;
  }, [compareRevision, revisions]);
  useEffect(() => {
    engine.current?.setCompareChain(compareChain);
    if (!compareChain) setListening("current");
  }, [compareChain]);
  useEffect(() => engine.current?.listenTo(listening), [listening]);
  const pushedBefore = useRef<ReadonlySet<number>>(new Set());
  useEffect(() => {
    const e = engine.current;
    if (e) {
      for (const i of pushedBefore.current) if (!pushed.has(i)) e.setPush(i, false);
      for (const i of pushed) if (!pushedBefore.current.has(i)) e.setPush(i, true);
    }
    pushedBefore.current = pushed;
  }, [pushed]);
  const setPush = useCallback((index: number, on: boolean) => {
    setPushed((p) => {
      if (p.has(index) === on) return p;
      const next = new Set(p);
      if (on) next.add(index);
      else next.delete(index);
      return next;
    });
  }, []);

  // A new mix version (or leaving the page) closes the engine; the next Listen opens it on the new audio.
  useEffect(() => {
    return () => {
      const e = engine.current;
      engine.current = null;
      store.set(null, -1);
      setEngineState({ status: "idle" });
      void e?.close();
    };
  }, [mix?.id, store]);
  useEffect(() => {
    if (defaultRegion) {
      setRegion({ startS: defaultRegion.startS, endS: defaultRegion.endS });
      setRegionText({ start: defaultRegion.startS.toFixed(1), end: defaultRegion.endS.toFixed(1) });
    }
  }, [mix?.id]); // eslint-disable-line react-hooks/exhaustive-deps

  const start = useCallback(async () => {
    if (!mix || !region) return;
    if (!heard.current) {
      setEngineState({ status: "error", message: "Correct the marked fields first: the chain cannot be heard as it is." });
      return;
    }
    try {
      let e = engine.current;
      if (!e) {
        setEngineState({ status: "loading", fraction: 0 });
        const mod = await loadDeskEngine();
        setPushHelp({ ...PUSH_FALLBACK, ...mod.PUSH_DESCRIPTIONS });
        e = await mod.DeskEngine.open({ url: mix.audioUrl }, region, heard.current, { onProgress: (fraction) => setEngineState({ status: "loading", fraction }) });
        engine.current = e;
        e.onMeters((m) => store.set(m, limiterIndexRef.current));
        e.onError((message) => setEngineState({ status: "error", message: `The desk stopped: ${message}` }));
        e.setMatch(matchRef.current);
        e.setBypassAll(bypassAllRef.current);
        e.setCompareChain(compareChainRef.current);
        e.listenTo(listeningRef.current);
        for (const i of pushedBefore.current) e.setPush(i, true);
      }
      await e.play();
      setEngineState({ status: "ready", playing: true });
    } catch (error) {
      setEngineState({ status: "error", message: `The desk could not play: ${(error as Error).message}` });
    }
  }, [mix, region, store]);
  // The engine's setters read the latest switches when it opens.
  const limiterIndexRef = useRef(limiterIndex);
  limiterIndexRef.current = limiterIndex;
  const matchRef = useRef(match);
  matchRef.current = match;
  const bypassAllRef = useRef(bypassAll);
  bypassAllRef.current = bypassAll;
  const compareChainRef = useRef(compareChain);
  compareChainRef.current = compareChain;
  const listeningRef = useRef(listening);
  listeningRef.current = listening;

  const playing = engineState.status === "ready" && engineState.playing;
  const togglePlay = useCallback(() => {
    if (playing) {
      engine.current?.pause();
      setEngineState({ status: "ready", playing: false });
      return;
    }
    if (engineState.status === "loading") return;
    if (!acked) setAsking(true);
    else void start();
  }, [playing, engineState.status, acked, start]);

  const applyRegion = async () => {
    if (!mix) return;
    const startS = Number(regionText.start.replace("−", "-"));
    const endS = Number(regionText.end.replace("−", "-"));
    if (!Number.isFinite(startS) || !Number.isFinite(endS)) return setRegionError("Enter the start and end in seconds, e.g. 42.5");
    if (startS < 0) return setRegionError("The region starts at 0 s or later");
    if (!(endS > startS)) return setRegionError("The end comes after the start");
    if (endS > mix.durationS + 1e-9) return setRegionError(`The mix is ${mix.durationS.toFixed(1)} s long`);
    if (endS - startS > DESK_MAX_REGION_S) return setRegionError(`At most ${DESK_MAX_REGION_S / 60} minutes at a time`);
    setRegionError(null);
    const next = { startS, endS };
    setRegion(next);
    try {
      await engine.current?.setRegion(next);
    } catch (error) {
      setRegionError(`The region could not be loaded: ${(error as Error).message}`);
    }
  };

  // Keyboard: Space play/pause, B bypass the selected stage, P push it (held, or tapped to latch), [ and ] select.
  const keyState = useRef({ togglePlay, selected, count: chain.stages.length, pushed, pDown: 0 });
  keyState.current = { ...keyState.current, togglePlay, selected, count: chain.stages.length, pushed };
  useEffect(() => {
    const skip = (e: KeyboardEvent) => {
      if (e.ctrlKey || e.metaKey || e.altKey) return true;
      const t = e.target as HTMLElement | null;
      if (!t) return false;
      if (t.closest("[role=dialog],[role=alertdialog]")) return true;
      const tag = t.tagName;
      if (tag === "TEXTAREA" || tag === "SELECT" || t.isContentEditable) return true;
      // Parameter fields take numbers only, so the desk's letters and Space still work there.
      if (tag === "INPUT" && (t as HTMLInputElement).dataset.param !== "true" && !["checkbox", "radio"].includes((t as HTMLInputElement).type)) return true;
      return false;
    };
    const down = (e: KeyboardEvent) => {
      if (skip(e)) return;
      const k = keyState.current;
      const t = e.target as HTMLElement | null;
      if (e.key === " " && !(t?.tagName === "BUTTON" || (t as HTMLInputElement | null)?.type === "checkbox")) {
        e.preventDefault();
        if (!e.repeat) k.togglePlay();
      } else if (e.key === "b" || e.key === "B") {
        e.preventDefault();
        if (!e.repeat && k.count > 0) setChain((c) => setAt(c, ["stages", k.selected, "bypass"], c.stages[k.selected]?.bypass !== true));
      } else if (e.key === "p" || e.key === "P") {
        e.preventDefault();
        if (e.repeat || k.count === 0) return;
        const wasOn = k.pushed.has(k.selected);
        k.pDown = wasOn ? -1 : performance.now();
        setPush(k.selected, !wasOn);
      } else if (e.key === "[" || e.key === "]") {
        e.preventDefault();
        setSelected((s) => Math.max(0, Math.min(k.count - 1, s + (e.key === "]" ? 1 : -1))));
      }
    };
    const up = (e: KeyboardEvent) => {
      if (e.key !== "p" && e.key !== "P") return;
      const k = keyState.current;
      // Held longer than a tap: a momentary push, released with the key.
      if (k.pDown > 0 && performance.now() - k.pDown > 300) setPush(k.selected, false);
      k.pDown = 0;
    };
    window.addEventListener("keydown", down);
    window.addEventListener("keyup", up);
    return () => {
      window.removeEventListener("keydown", down);
      window.removeEventListener("keyup", up);
    };
  }, [setPush]);

  const releasePush = () => {
    if (pushed.size > 0) setPushed(new Set());
  };
  const submitSave = (params: EditableChain) => {
    releasePush();
    saver.submit({ intent: "save", params: JSON.stringify(params), mix: mix?.id ?? "" }, { method: "post" });
  };
  const submitRender = (kind: "preview" | "print", params: EditableChain) => {
    if (!mix) return;
    releasePush();
    const form: Record<string, string> = { intent: "render", kind, mixId: mix.id, params: JSON.stringify(params) };
    if (kind === "preview" && region) Object.assign(form, { startS: String(region.startS), endS: String(region.endS) });
    renderer.submit(form, { method: "post" });
  };
  const toRecord = (what: "save" | "preview" | "print") => {
    if (soloedBands(chain).length > 0) return setSoloQuestion(what);
    if (what === "save") submitSave(chain);
    else submitRender(what, chain);
  };
  const answerSolo = (keepSolo: boolean) => {
    const what = soloQuestion;
    setSoloQuestion(null);
    if (!what) return;
    const params = keepSolo ? chain : withoutSolo(chain);
    if (!keepSolo) setChain(params);
    if (what === "save") submitSave(params);
    else submitRender(what, params);
  };

  const selectedStage = chain.stages[selected] as Json | undefined;
  const soloList = soloedBands(chain);
  const loading = engineState.status === "loading";

  return (
    <div className="space-y-4" data-testid="desk">
      {/* Transport */}
      <section aria-label="Transport" className="card space-y-3 p-3">
        <div className="flex flex-wrap items-center gap-3">
          <button type="button" className="btn-primary min-w-28" onClick={togglePlay} disabled={!mix || loading} aria-keyshortcuts="Space">
            {playing ? "Pause" : "Listen"}
          </button>
          <Position store={store} />
          {loading && (
            <span className="flex items-center gap-2 text-sm text-ink-soft" role="status">
              Loading the mix <progress className="w-24" max={1} value={engineState.fraction} /> <span className="num">{Math.round(engineState.fraction * 100)} %</span>
            </span>
          )}
          <label className="inline-flex items-center gap-2 text-sm">
            <input type="checkbox" checked={match} onChange={(e) => setMatch(e.target.checked)} />
            Match
          </label>
          <span className="text-sm text-ink-soft">
            offset <MatchOffset store={store} />
          </span>
          <ToggleButton pressed={bypassAll} onToggle={() => setBypassAll((b) => !b)} label="Bypass all" testId="bypass-all">
            Bypass all
          </ToggleButton>
          {mixes.length > 1 && mix && (
            <label className="ml-auto inline-flex items-center gap-2 text-sm">
              Mix
              <select
                className="field-input py-1 text-sm"
                value={mix.id}
                onChange={(e) => {
                  const id = e.target.value;
                  setSearchParams((p) => {
                    p.set("mix", id);
                    p.delete("saved");
                    return p;
                  });
                }}
              >
                {mixes.map((m) => (
                  <option key={m.id} value={m.id}>
                    {m.label}
                  </option>
                ))}
              </select>
            </label>
          )}
        </div>
        {asking && (
          <MonitoringNotice
            onConfirm={() => {
              ack();
              setAsking(false);
              void start();
            }}
            onCancel={() => setAsking(false)}
          />
        )}
        {engineState.status === "error" && (
          <p className="text-sm text-danger" role="alert">
            {engineState.message}
          </p>
        )}
        {mix && region ? (
          <form
            className="flex flex-wrap items-end gap-2"
            aria-label="Region"
            onSubmit={(e) => {
              e.preventDefault();
              void applyRegion();
            }}
          >
            <label className="text-sm">
              <span className="mb-0.5 block text-xs text-ink-soft">Region start (s)</span>
              <input className="field-input num w-24 py-1 text-sm" inputMode="decimal" value={regionText.start} onChange={(e) => setRegionText((r) => ({ ...r, start: e.target.value }))} />
            </label>
            <label className="text-sm">
              <span className="mb-0.5 block text-xs text-ink-soft">Region end (s)</span>
              <input className="field-input num w-24 py-1 text-sm" inputMode="decimal" value={regionText.end} onChange={(e) => setRegionText((r) => ({ ...r, end: e.target.value }))} />
            </label>
            <button type="submit" className="btn-quiet min-h-0 py-1.5 text-sm">
              Set region
            </button>
            <span className="text-xs text-ink-soft">
              Looping <span className="num">{fmtClock(region.startS)}</span>–<span className="num">{fmtClock(region.endS)}</span> of mix v{mix.version}
              {defaultRegion?.loudest && region.startS === defaultRegion.startS && region.endS === defaultRegion.endS ? " (the loudest 30 s)" : ""}; at most {DESK_MAX_REGION_S / 60} minutes.
            </span>
            {regionError && (
              <p className="w-full text-sm text-danger" role="alert">
                {regionError}
              </p>
            )}
          </form>
        ) : (
          <p className="text-sm text-ink-soft">{mixes.length === 0 ? "There is no mix to listen to: a studio template has no track, and a track needs a mix uploaded first." : "No mix chosen."}</p>
        )}
        <MonitoringReminder />
        <p className="text-xs text-ink-faint">
          Keys: Space listen/pause · B bypass the selected stage · P push it (hold, or tap to latch) · [ ] previous/next stage · arrows nudge a field (Shift finer) · drag a field's ⇕ grip · wheel over a focused field.
        </p>
      </section>

      <div className="grid gap-4 lg:grid-cols-[minmax(0,30rem)_minmax(0,1fr)]">
        {/* The chain */}
        <section aria-labelledby="chain-title" className="min-w-0 space-y-3">
          <h2 id="chain-title" className="text-lg font-semibold">
            Chain
          </h2>
          {chain.stages.length === 0 && <p className="text-sm text-ink-soft">No stages yet: the mix passes through unchanged.</p>}
          <ol className="space-y-2" aria-label="Stages">
            {chain.stages.map((stage, i) => (
              <StageStrip
                key={i}
                ctx={ctx}
                index={i}
                count={chain.stages.length}
                stage={stage}
                selected={i === selected}
                pushed={pushed.has(i)}
                pushHelp={pushHelp[String(stage.type)] ?? ""}
                store={store}
                onSelect={() => setSelected(i)}
                onPush={(on) => setPush(i, on)}
                onMove={(to) => {
                  releasePush();
                  setChain((c) => {
                    const stages = [...c.stages];
                    const [moved] = stages.splice(i, 1);
                    stages.splice(to, 0, moved);
                    return { ...c, stages };
                  });
                  setSelected(to);
                }}
                onRemove={() => {
                  releasePush();
                  setChain((c) => ({ ...c, stages: c.stages.filter((_, j) => j !== i) }));
                  setSelected((s) => Math.max(0, Math.min(s, chain.stages.length - 2)));
                }}
              />
            ))}
          </ol>
          <div className="flex flex-wrap items-end gap-2">
            <label className="text-sm">
              <span className="mb-0.5 block text-xs font-medium text-ink-soft">New stage</span>
              <select className="field-input py-1 text-sm" value={addType} onChange={(e) => setAddType(e.target.value)}>
                {STAGE_TYPES.map((t) => (
                  <option key={t} value={t}>
                    {STAGE_LABELS[t]}
                  </option>
                ))}
              </select>
            </label>
            <button
              type="button"
              className="btn-quiet min-h-0 py-1.5 text-sm"
              onClick={() => {
                setChain((c) => ({ ...c, stages: [...c.stages, newStage(addType)] }));
                setSelected(chain.stages.length);
              }}
            >
              Add stage
            </button>
          </div>
        </section>

        {/* Curves, meters, the record */}
        <div className="min-w-0 space-y-4">
          <section aria-labelledby="curves-title" className="card space-y-3 p-3">
            <h2 id="curves-title" className="text-sm font-semibold">
              {selectedStage ? `Stage ${selected + 1}: ${STAGE_LABELS[String(selectedStage.type)] ?? String(selectedStage.type)}` : "Curves"}
            </h2>
            <StageCurve stage={selectedStage} index={selected} sampleRate={sampleRate} store={store} />
            {limiterIndex >= 0 && limiterIndex !== selected && <StageCurve stage={chain.stages[limiterIndex]} index={limiterIndex} sampleRate={sampleRate} store={store} />}
          </section>
          <OutputMeters store={store} ceilingDbtp={limiterIndex >= 0 ? Number((chain.stages[limiterIndex] as Json).ceilingDbtp ?? 0) : 0} />

          <section aria-labelledby="compare-title" className="card space-y-2 p-3">
            <h2 id="compare-title" className="text-sm font-semibold">
              Compare settings
            </h2>
            {revisions.length === 0 ? (
              <p className="text-sm text-ink-soft">No saved revision to compare with yet.</p>
            ) : (
              <div className="flex flex-wrap items-end gap-2">
                <label className="text-sm">
                  <span className="mb-0.5 block text-xs text-ink-soft">Against</span>
                  <select
                    className="field-input py-1 text-sm"
                    value={compareRevision ?? ""}
                    onChange={(e) => setCompareRevision(e.target.value === "" ? null : Number(e.target.value))}
                    aria-label="Compare with revision"
                  >
                    <option value="">No comparison</option>
                    {revisions.map((r) => (
                      <option key={r.id} value={r.revision}>
                        Revision {r.revision}
                      </option>
                    ))}
                  </select>
                </label>
                <div className="flex gap-1" role="group" aria-label="Listen to">
                  <ToggleButton pressed={listening === "current"} onToggle={() => setListening("current")} label="Listen to the current settings">
                    Current
                  </ToggleButton>
                  <ToggleButton pressed={listening === "compare"} onToggle={() => compareChain && setListening("compare")} label={`Listen to revision ${compareRevision ?? ""}`}>
                    {compareRevision ? `Revision ${compareRevision}` : "Saved"}
                  </ToggleButton>
                </div>
                <p className="w-full text-xs text-ink-soft">Both run side by side on the same audio; switching is instant and level-matched.</p>
              </div>
            )}
          </section>

          <section aria-labelledby="record-title" className="card space-y-2 p-3">
            <h2 id="record-title" className="text-sm font-semibold">
              To the record
            </h2>
            <div className="flex flex-wrap gap-2">
              <button type="button" className="btn-primary" disabled={saver.state !== "idle"} onClick={() => toRecord("save")}>
                {saver.state !== "idle" ? "Saving…" : "Save as revision"}
              </button>
              <button type="button" className="btn-quiet" disabled={!mix || renderer.state !== "idle"} onClick={() => toRecord("preview")}>
                Render preview
              </button>
              <button type="button" className="btn-quiet" disabled={!mix || renderer.state !== "idle"} onClick={() => toRecord("print")}>
                Render print
              </button>
            </div>
            <p className="text-xs text-ink-soft">
              Saves exactly what you hear: Push is released first. A preview renders the desk&apos;s region, a print the whole mix, each from the saved revision.
            </p>
            {soloQuestion && (
              <div role="alertdialog" aria-labelledby="solo-q" className="rounded-md border border-danger/40 bg-danger-wash p-3 text-sm">
                <p id="solo-q">
                  {soloList.map((s) => `Stage ${s.stage + 1} band ${s.band + 1}`).join(", ")} {soloList.length > 1 ? "are" : "is"} soloed: saved as it is, the print would carry only{" "}
                  {soloList.length > 1 ? "those bands" : "that band"}.
                </p>
                <div className="mt-2 flex flex-wrap gap-2">
                  <button type="button" className="btn-primary" onClick={() => answerSolo(false)}>
                    Release solo and save
                  </button>
                  <button type="button" className="btn-quiet" onClick={() => answerSolo(true)}>
                    Save with the solo
                  </button>
                  <button type="button" className="btn-quiet" onClick={() => setSoloQuestion(null)}>
                    Cancel
                  </button>
                </div>
              </div>
            )}
            {(answer.formError || Object.keys(answer.errors).length > 0) && (
              <p className="text-sm text-danger" role="alert">
                {answer.formError ?? "Not saved: correct the fields marked in the chain."}
              </p>
            )}
            {saved && saver.state === "idle" && Object.keys(answer.errors).length === 0 && (
              <p className="text-sm text-accent-deep" role="status">
                Saved as revision <span className="num">{saved}</span>.
              </p>
            )}
            {renderer.data?.render && (
              <p className="text-sm" role="status">
                {renderer.data.render.kind === "print" ? "Print" : "Preview"} of revision <span className="num">{renderer.data.render.revision}</span>
                {renderer.data.render.created ? " (saved for it)" : ""} queued:{" "}
                <Link className="underline" to={renderer.data.render.url}>
                  follow it
                </Link>
                .
              </p>
            )}
          </section>
        </div>
      </div>
      <input type="hidden" data-testid="chain-id" value={chainId} readOnly />
    </div>
  );
}

function StageCurve({ stage, index, sampleRate, store }: { stage: Json | undefined; index: number; sampleRate: number; store: MeterStore }) {
  const meters = useMeters(store);
  const gr = meters?.stages.find((s) => s.index === index)?.grDb ?? [];
  // The settings' arrays only change when the stage does, so curves are not recomputed on every meter frame.
  const eqBands = useMemo(() => (stage?.type === "eq" ? ((stage.bands as EqBand[]) ?? []).map((b) => ({ ...b, channel: b.channel ?? "stereo" })) : []), [stage]);
  const crossoversHz = useMemo(() => (stage?.type === "multiband" ? ((stage.crossoversHz as unknown[]) ?? []).map(Number) : []), [stage]);
  if (!stage) return <p className="text-sm text-ink-soft">Select a stage to see its curve.</p>;
  switch (stage.type) {
    case "eq":
      return <EqCurve bands={eqBands} sampleRate={sampleRate} />;
    case "compress": {
      const s = stage as unknown as CompressStage;
      if (![s.thresholdDb, s.ratio, s.kneeDb].every((v) => typeof v === "number")) return null;
      return <CompressorCurve settings={s} grDb={meters ? (gr[0] ?? 0) : null} />;
    }
    case "multiband": {
      const s = stage as unknown as MultibandStage;
      const bands = s.bands ?? [];
      return (
        <div className="space-y-3">
          <MultibandCurve crossoversHz={crossoversHz} sampleRate={sampleRate} grDb={bands.map((_, b) => gr[b] ?? 0)} soloed={bands.map((b) => b.solo === true)} />
          <div className="grid gap-3 sm:grid-cols-2">
            {bands.map((b, i) =>
              [b.thresholdDb, b.ratio, b.kneeDb].every((v) => typeof v === "number") ? <CompressorCurve key={i} title={`Band ${i + 1} curve`} settings={b} grDb={meters ? (gr[i] ?? 0) : null} /> : null,
            )}
          </div>
        </div>
      );
    }
    case "limit": {
      const s = stage as unknown as LimitStage;
      return <LimiterHistoryLive store={store} ceilingDbtp={typeof s.ceilingDbtp === "number" ? s.ceilingDbtp : 0} />;
    }
    default:
      return <p className="text-sm text-ink-soft">{STAGE_LABELS[String(stage.type)] ?? String(stage.type)} has no curve; hear it with Bypass and Push, and read it in the output meters.</p>;
  }
}

function LimiterHistoryLive({ store, ceilingDbtp }: { store: MeterStore; ceilingDbtp: number }) {
  const meters = useMeters(store);
  return <LimiterHistory historyDb={store.limiterHistory()} ceilingDbtp={ceilingDbtp} truePeakDbtp={meters?.truePeakDbtp ?? null} />;
}
