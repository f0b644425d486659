// One stage of the chain at the desk: its strip (number, name, Bypass, Push,
// live gain reduction) and, when it is the selected stage, every parameter
// as a live control. Multiband bands have their own Solo and Bypass and
// gain-reduction readings. Parameters come from dsp/chain/fields.ts, labels
// from app/components/chain/labels.ts.
import { useId, useRef } from "react";
import {
  COMPRESS_FIELDS,
  EQ_BAND_FIELDS,
  EQ_CHANNELS,
  EQ_SHAPES,
  LIMIT_FIELDS,
  MAX_CROSSOVERS,
  MULTIBAND_FIELDS,
  RESONANCE_FIELDS,
  RESONANCE_LISTEN,
  SATURATE_FIELDS,
  TAPE_FIELDS,
  TRIM_FIELDS,
  type FieldRange,
} from "../../../dsp/chain/fields.ts";
import { STAGE_LABELS } from "../chain/labels.ts";
import { newEqBand, newMultibandBand } from "../chain/stage-defaults.ts";
import { pathKey, type Json, type Path } from "./chain-state.ts";
import { ParamControl } from "./param-control.tsx";
import { fmtGr } from "./format.ts";
import { useMeters, type MeterStore } from "./meter-store.ts";

export type Ctx = { errors: Record<string, string>; set: (path: Path, value: unknown) => void };

export const OPTION_LABELS: Record<string, string> = {
  peak: "Peak",
  lowShelf: "Low shelf",
  highShelf: "High shelf",
  highPass: "High-pass",
  lowPass: "Low-pass",
  notch: "Notch",
  stereo: "Stereo",
  mid: "Mid",
  side: "Side",
  left: "Left",
  right: "Right",
  output: "Output",
  removed: "Removed only",
};

const grid = "grid grid-cols-2 gap-x-3 gap-y-2 sm:grid-cols-3";

function Num({ ctx, path, range, value, label }: { ctx: Ctx; path: Path; range: FieldRange; value: unknown; label?: string }) {
  return <ParamControl range={range} label={label} value={value} error={ctx.errors[pathKey(path)]} dataPath={pathKey(path)} onChange={(v) => ctx.set(path, v)} />;
}

function Select({ ctx, path, label, value, options }: { ctx: Ctx; path: Path; label: string; value: unknown; options: readonly (string | number)[] }) {
  const id = useId();
  const error = ctx.errors[pathKey(path)];
  return (
    <div className="min-w-0">
      <label htmlFor={id} className="mb-0.5 block text-xs font-medium text-ink-soft">
        {label}
      </label>
      <select
        id={id}
        className="field-input px-2 py-1 text-sm"
        data-path={pathKey(path)}
        value={String(value ?? "")}
        aria-invalid={error ? true : undefined}
        onChange={(e) => ctx.set(path, options.find((o) => String(o) === e.target.value))}
      >
        {options.map((o) => (
          <option key={String(o)} value={String(o)}>
            {OPTION_LABELS[String(o)] ?? String(o)}
          </option>
        ))}
      </select>
      {error && <p className="mt-0.5 text-xs text-danger" role="alert">{error}</p>}
    </div>
  );
}

/** A switch shown as a pressed/unpressed button (Bypass, Solo). */
export function ToggleButton({ pressed, onToggle, children, label, testId }: { pressed: boolean; onToggle: () => void; children: React.ReactNode; label: string; testId?: string }) {
  return (
    <button
      type="button"
      aria-pressed={pressed}
      aria-label={label}
      data-testid={testId}
      onClick={onToggle}
      className={`rounded-md border px-2 py-1 text-xs font-semibold tracking-wide uppercase ${pressed ? "border-accent bg-accent text-card" : "border-rule bg-card text-ink-soft hover:bg-paper-deep"}`}
    >
      {children}
    </button>
  );
}

/**
 * Push: held, it pushes while held; a short click latches it until the next
 * click. Keyboard (Enter, Space) toggles.
 */
export const PUSH_HOLD_MS = 300;
function PushButton({ pushed, onPush, label, help }: { pushed: boolean; onPush: (on: boolean) => void; label: string; help: string }) {
  const press = useRef<{ wasOn: boolean; at: number } | null>(null);
  return (
    <button
      type="button"
      aria-pressed={pushed}
      aria-label={label}
      title={help}
      data-push="true"
      onPointerDown={(e) => {
        if (e.button !== 0) return;
        e.currentTarget.setPointerCapture(e.pointerId);
        press.current = { wasOn: pushed, at: performance.now() };
        if (!pushed) onPush(true);
      }}
      onPointerUp={() => {
        const p = press.current;
        press.current = null;
        if (!p) return;
        if (p.wasOn || performance.now() - p.at > PUSH_HOLD_MS) onPush(false);
      }}
      onPointerCancel={() => {
        if (press.current && !press.current.wasOn) onPush(false);
        press.current = null;
      }}
      onKeyDown={(e) => {
        if (e.key !== "Enter" && e.key !== " ") return;
        e.preventDefault();
        e.stopPropagation();
        if (!e.repeat) onPush(!pushed);
      }}
      className={`rounded-md border px-2 py-1 text-xs font-semibold tracking-wide uppercase select-none ${pushed ? "border-danger bg-danger text-card" : "border-rule bg-card text-ink-soft hover:bg-paper-deep"}`}
    >
      Push
    </button>
  );
}

/** Live gain reduction of one trace as text (and a small bar), with its peak hold. */
export function GrReading({ store, stageIndex, trace, label, testId }: { store: MeterStore; stageIndex: number; trace: number; label: string; testId: string }) {
  const meters = useMeters(store);
  const stage = meters?.stages.find((s) => s.index === stageIndex);
  const gr = stage?.grDb[trace] ?? 0;
  const peak = stage?.grPeakDb[trace] ?? 0;
  return (
    <span className="inline-flex items-center gap-1.5 text-xs" title={`${label}: gain reduction, peak hold`}>
      <span className="text-ink-soft">GR</span>
      <span className="relative inline-block h-2 w-12 overflow-hidden rounded-sm bg-paper-deep" aria-hidden="true">
        <span className="absolute inset-y-0 right-0 bg-accent" style={{ width: `${Math.min(100, (gr / 12) * 100)}%` }} />
        <span className="absolute inset-y-0 w-px bg-danger" style={{ right: `${Math.min(100, (peak / 12) * 100)}%` }} />
      </span>
      <span className="num w-14 text-right" aria-label={`${label} gain reduction`} data-testid={testId}>
        {fmtGr(meters ? gr : 0)}
      </span>
      <span className="num text-ink-faint" aria-label={`${label} gain reduction peak`}>
        ↓{fmtGr(peak)}
      </span>
    </span>
  );
}

function OptionalNumber({ ctx, path, range, value, off, offLabel }: { ctx: Ctx; path: Path; range: FieldRange; value: unknown; off: unknown; offLabel: string }) {
  const isOff = value === off || value === undefined;
  const fallback = range.default ?? Math.min(range.max, Math.max(range.min, 100));
  return (
    <div className="min-w-0">
      {isOff ? (
        <div>
          <span className="mb-0.5 block text-xs font-medium text-ink-soft">{range.label}</span>
          <p className="field-input px-2 py-1 text-sm text-ink-soft">{offLabel}</p>
        </div>
      ) : (
        <Num ctx={ctx} path={path} range={range} value={value} />
      )}
      <label className="mt-0.5 inline-flex items-center gap-1 text-xs">
        <input type="checkbox" checked={isOff} data-path={`${pathKey(path)}:${offLabel}`} onChange={(e) => ctx.set(path, e.target.checked ? off : fallback)} />
        {offLabel}
      </label>
    </div>
  );
}

function CompressFields({ ctx, path, values }: { ctx: Ctx; path: Path; values: Json }) {
  const f = COMPRESS_FIELDS;
  return (
    <div className={grid}>
      <Num ctx={ctx} path={[...path, "thresholdDb"]} range={f.thresholdDb} value={values.thresholdDb} />
      <Num ctx={ctx} path={[...path, "ratio"]} range={f.ratio} value={values.ratio} />
      <Num ctx={ctx} path={[...path, "kneeDb"]} range={f.kneeDb} value={values.kneeDb} />
      <Num ctx={ctx} path={[...path, "attackMs"]} range={f.attackMs} value={values.attackMs} />
      <OptionalNumber ctx={ctx} path={[...path, "releaseMs"]} range={f.releaseMs} value={values.releaseMs} off="auto" offLabel="auto" />
      <Num ctx={ctx} path={[...path, "makeupDb"]} range={f.makeupDb} value={values.makeupDb} />
      <Num ctx={ctx} path={[...path, "rmsWindowMs"]} range={f.rmsWindowMs} value={values.rmsWindowMs} />
      <OptionalNumber ctx={ctx} path={[...path, "sidechainHighPassHz"]} range={f.sidechainHighPassHz} value={values.sidechainHighPassHz} off={null} offLabel="off" />
    </div>
  );
}

function EqBands({ ctx, path, bands }: { ctx: Ctx; path: Path; bands: Json[] }) {
  return (
    <div className="space-y-2">
      {bands.map((band, b) => (
        <fieldset key={b} className="rounded-md border border-rule p-2">
          <legend className="px-1 text-xs font-semibold">Band {b + 1}</legend>
          <div className={grid}>
            <Select ctx={ctx} path={[...path, b, "shape"]} label="Shape" value={band.shape} options={EQ_SHAPES} />
            <Num ctx={ctx} path={[...path, b, "freqHz"]} range={EQ_BAND_FIELDS.freqHz} value={band.freqHz} />
            <Num ctx={ctx} path={[...path, b, "gainDb"]} range={EQ_BAND_FIELDS.gainDb} value={band.gainDb} />
            <Num ctx={ctx} path={[...path, b, "q"]} range={EQ_BAND_FIELDS.q} value={band.q} />
            <Select ctx={ctx} path={[...path, b, "channel"]} label="Channel" value={band.channel ?? "stereo"} options={EQ_CHANNELS} />
          </div>
          <button type="button" className="mt-1 text-xs text-ink-soft underline" onClick={() => ctx.set(path, bands.filter((_, i) => i !== b))}>
            Remove band {b + 1}
          </button>
        </fieldset>
      ))}
      {ctx.errors[pathKey(path)] && <p className="text-xs text-danger" role="alert">{ctx.errors[pathKey(path)]}</p>}
      <button type="button" className="btn-quiet min-h-0 px-2 py-1 text-xs" onClick={() => ctx.set(path, [...bands, newEqBand()])}>
        Add EQ band
      </button>
    </div>
  );
}

function MultibandFields({ ctx, path, stage, store, stageIndex }: { ctx: Ctx; path: Path; stage: Json; store: MeterStore; stageIndex: number }) {
  const crossovers = (stage.crossoversHz as unknown[]) ?? [];
  const bands = (stage.bands as Json[]) ?? [];
  const addBand = () => {
    const last = Number(crossovers[crossovers.length - 1] ?? 100);
    ctx.set(path, { ...stage, crossoversHz: [...crossovers, Math.min(MULTIBAND_FIELDS.crossoverHz.max, Math.round(last * 2))], bands: [...bands, newMultibandBand()] });
  };
  const removeBand = (b: number) => {
    const cut = b === 0 ? 0 : b - 1;
    ctx.set(path, { ...stage, crossoversHz: crossovers.filter((_, i) => i !== cut), bands: bands.filter((_, i) => i !== b) });
  };
  return (
    <div className="space-y-2">
      <div className={grid}>
        {crossovers.map((hz, i) => (
          <Num key={i} ctx={ctx} path={[...path, "crossoversHz", i]} range={MULTIBAND_FIELDS.crossoverHz} label={`Crossover ${i + 1}`} value={hz} />
        ))}
      </div>
      {ctx.errors[pathKey([...path, "crossoversHz"])] && <p className="text-xs text-danger" role="alert">{ctx.errors[pathKey([...path, "crossoversHz"])]}</p>}
      {bands.map((band, b) => (
        <fieldset key={b} className={`rounded-md border p-2 ${band.solo === true ? "border-accent" : "border-rule"}`}>
          <legend className="px-1 text-xs font-semibold">Band {b + 1}</legend>
          <div className="mb-2 flex flex-wrap items-center gap-2">
            <ToggleButton pressed={band.solo === true} onToggle={() => ctx.set([...path, "bands", b, "solo"], band.solo !== true)} label={`Solo band ${b + 1}`}>
              Solo
            </ToggleButton>
            <ToggleButton pressed={band.bypass === true} onToggle={() => ctx.set([...path, "bands", b, "bypass"], band.bypass !== true)} label={`Bypass band ${b + 1}`}>
              Bypass
            </ToggleButton>
            <GrReading store={store} stageIndex={stageIndex} trace={b} label={`Stage ${stageIndex + 1} band ${b + 1}`} testId={`gr-${stageIndex}-${b}`} />
          </div>
          <CompressFields ctx={ctx} path={[...path, "bands", b]} values={band} />
          {bands.length > 2 && (
            <button type="button" className="mt-1 text-xs text-ink-soft underline" onClick={() => removeBand(b)}>
              Remove band {b + 1}
            </button>
          )}
        </fieldset>
      ))}
      {ctx.errors[pathKey([...path, "bands"])] && <p className="text-xs text-danger" role="alert">{ctx.errors[pathKey([...path, "bands"])]}</p>}
      {crossovers.length < MAX_CROSSOVERS && (
        <button type="button" className="btn-quiet min-h-0 px-2 py-1 text-xs" onClick={addBand}>
          Add band
        </button>
      )}
    </div>
  );
}

function StageFields({ ctx, index, stage, store }: { ctx: Ctx; index: number; stage: Json; store: MeterStore }) {
  const path: Path = ["stages", index];
  switch (stage.type) {
    case "trim":
      return (
        <div className={grid}>
          <Num ctx={ctx} path={[...path, "gainDb"]} range={TRIM_FIELDS.gainDb} value={stage.gainDb} />
        </div>
      );
    case "eq":
      return <EqBands ctx={ctx} path={[...path, "bands"]} bands={(stage.bands as Json[]) ?? []} />;
    case "saturate":
      return (
        <div className={grid}>
          <Num ctx={ctx} path={[...path, "driveDb"]} range={SATURATE_FIELDS.driveDb} value={stage.driveDb} />
          <Num ctx={ctx} path={[...path, "blend"]} range={SATURATE_FIELDS.blend} value={stage.blend} />
          <Select ctx={ctx} path={[...path, "oversample"]} label="Oversampling (×)" value={stage.oversample ?? 4} options={[2, 4]} />
        </div>
      );
    case "resonance": {
      const f = RESONANCE_FIELDS;
      return (
        <div className="space-y-2">
          <div className={grid}>
            <Num ctx={ctx} path={[...path, "lowHz"]} range={f.lowHz} value={stage.lowHz} />
            <Num ctx={ctx} path={[...path, "highHz"]} range={f.highHz} value={stage.highHz} />
            <Num ctx={ctx} path={[...path, "thresholdDb"]} range={f.thresholdDb} value={stage.thresholdDb} />
            <Num ctx={ctx} path={[...path, "maxCutDb"]} range={f.maxCutDb} value={stage.maxCutDb} />
            <Num ctx={ctx} path={[...path, "attackMs"]} range={f.attackMs} value={stage.attackMs} />
            <Num ctx={ctx} path={[...path, "releaseMs"]} range={f.releaseMs} value={stage.releaseMs} />
            <Num ctx={ctx} path={[...path, "blend"]} range={f.blend} value={stage.blend} />
            <Select ctx={ctx} path={[...path, "listen"]} label="Listen to" value={stage.listen ?? "output"} options={RESONANCE_LISTEN} />
          </div>
          {stage.listen === "removed" && (
            <p className="text-sm text-ink-soft" data-testid="listen-removed-note">
              Listening to what the stage removes is for previews and the desk; a print of this revision will be refused.
            </p>
          )}
        </div>
      );
    }
    case "tape": {
      const f = TAPE_FIELDS;
      return (
        <div className={grid}>
          <Num ctx={ctx} path={[...path, "driveDb"]} range={f.driveDb} value={stage.driveDb} />
          <Num ctx={ctx} path={[...path, "bumpHz"]} range={f.bumpHz} value={stage.bumpHz} />
          <Num ctx={ctx} path={[...path, "bumpDb"]} range={f.bumpDb} value={stage.bumpDb} />
          <OptionalNumber ctx={ctx} path={[...path, "rolloffHz"]} range={f.rolloffHz} value={stage.rolloffHz} off={null} offLabel="none" />
          <Num ctx={ctx} path={[...path, "blend"]} range={f.blend} value={stage.blend} />
          <Select ctx={ctx} path={[...path, "oversample"]} label="Oversampling (×)" value={stage.oversample ?? 4} options={[2, 4]} />
        </div>
      );
    }
    case "compress":
      return <CompressFields ctx={ctx} path={path} values={stage} />;
    case "multiband":
      return <MultibandFields ctx={ctx} path={path} stage={stage} store={store} stageIndex={index} />;
    case "limit":
      return (
        <div className="space-y-2">
          <div className={grid}>
            <Num ctx={ctx} path={[...path, "inputGainDb"]} range={LIMIT_FIELDS.inputGainDb} value={stage.inputGainDb} />
            <Num ctx={ctx} path={[...path, "ceilingDbtp"]} range={LIMIT_FIELDS.ceilingDbtp} value={stage.ceilingDbtp} />
            <Num ctx={ctx} path={[...path, "lookaheadMs"]} range={LIMIT_FIELDS.lookaheadMs} value={stage.lookaheadMs} />
            <Num ctx={ctx} path={[...path, "releaseMs"]} range={LIMIT_FIELDS.releaseMs} value={stage.releaseMs} />
          </div>
          <label className="inline-flex items-center gap-2 text-sm">
            <input type="checkbox" data-path={pathKey([...path, "truePeak"])} checked={stage.truePeak !== false} onChange={(e) => ctx.set([...path, "truePeak"], e.target.checked)} />
            True-peak detection
          </label>
        </div>
      );
    default:
      return <p className="text-sm text-danger">Unknown stage type {String(stage.type)}</p>;
  }
}

/** Stage types whose single gain-reduction trace the strip shows. */
const ONE_TRACE = new Set(["compress", "limit", "resonance", "tape"]);

export function StageStrip({
  ctx,
  index,
  count,
  stage,
  selected,
  pushed,
  pushHelp,
  store,
  onSelect,
  onPush,
  onMove,
  onRemove,
}: {
  ctx: Ctx;
  index: number;
  count: number;
  stage: Json;
  selected: boolean;
  pushed: boolean;
  pushHelp: string;
  store: MeterStore;
  onSelect: () => void;
  onPush: (on: boolean) => void;
  onMove: (to: number) => void;
  onRemove: () => void;
}) {
  const name = STAGE_LABELS[String(stage.type)] ?? String(stage.type);
  const label = `Stage ${index + 1}: ${name}`;
  const bypassed = stage.bypass === true;
  const panelId = useId();
  return (
    <li aria-label={label} className={`rounded-lg border bg-card ${selected ? "border-accent shadow-sm" : "border-rule"}`} data-stage={index} data-selected={selected ? "true" : "false"}>
      <div className="flex flex-wrap items-center gap-2 px-3 py-2">
        <button type="button" className="mr-auto min-w-0 text-left font-semibold" aria-expanded={selected} aria-controls={panelId} onClick={onSelect}>
          <span className="num text-ink-soft">{index + 1}.</span> {name}
          {bypassed && <span className="ml-2 text-xs font-normal text-ink-soft uppercase">bypassed</span>}
        </button>
        {ONE_TRACE.has(String(stage.type)) && <GrReading store={store} stageIndex={index} trace={0} label={label} testId={`gr-${index}`} />}
        <ToggleButton pressed={bypassed} onToggle={() => ctx.set(["stages", index, "bypass"], !bypassed)} label={`Bypass stage ${index + 1}`} testId={`bypass-${index}`}>
          Bypass
        </ToggleButton>
        <PushButton pushed={pushed} onPush={onPush} label={`Push stage ${index + 1}`} help={pushHelp} />
      </div>
      {selected && (
        <div id={panelId} className="space-y-3 border-t border-rule px-3 py-3">
          {ctx.errors[`stages[${index}]`] && <p className="text-xs text-danger" role="alert">{ctx.errors[`stages[${index}]`]}</p>}
          <StageFields ctx={ctx} index={index} stage={stage} store={store} />
          {pushHelp && <p className="text-xs text-ink-soft">Push: {pushHelp}</p>}
          <div className="flex flex-wrap gap-2 border-t border-rule pt-2">
            <button type="button" className="btn-quiet min-h-0 px-2 py-1 text-xs" disabled={index === 0} onClick={() => onMove(index - 1)} aria-label={`Move stage ${index + 1} up`}>
              ↑ Up
            </button>
            <button type="button" className="btn-quiet min-h-0 px-2 py-1 text-xs" disabled={index === count - 1} onClick={() => onMove(index + 1)} aria-label={`Move stage ${index + 1} down`}>
              ↓ Down
            </button>
            <button type="button" className="btn-quiet min-h-0 px-2 py-1 text-xs" onClick={onRemove} aria-label={`Remove stage ${index + 1}`}>
              Remove
            </button>
          </div>
        </div>
      )}
    </li>
  );
}
