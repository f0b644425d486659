// The chain editor: the chain lives in React state and is posted as JSON in
// one hidden field; the server checks it with the renderer's schema and
// answers errors keyed by path ("stages[2].ratio"), shown beside each input.
import { useId, useState } from "react";
import { Form } from "react-router";
import {
  BIT_DEPTHS,
  COMPRESS_FIELDS,
  DITHERS,
  EQ_BAND_FIELDS,
  EQ_CHANNELS,
  EQ_SHAPES,
  LIMIT_FIELDS,
  MAX_CROSSOVERS,
  MULTIBAND_FIELDS,
  OUTPUT_FIELDS,
  SATURATE_FIELDS,
  STAGE_TYPES,
  TRIM_FIELDS,
  type FieldRange,
} from "../../../dsp/chain/fields.ts";
import { STAGE_LABELS } from "./labels.ts";
import { newEqBand, newMultibandBand, newStage, setAt, type Json } from "./stage-defaults.ts";

type Errors = Record<string, string>;
type Path = (string | number)[];
type Ctx = { errors: Errors; set: (path: Path, value: unknown) => void };

const key = (path: Path) => path.reduce<string>((out, p) => (typeof p === "number" ? `${out}[${p}]` : out ? `${out}.${p}` : p), "");

function ErrorText({ id, error }: { id: string; error?: string }) {
  return error ? (
    <p id={id} className="mt-1 text-sm text-danger" role="alert">
      {error}
    </p>
  ) : null;
}

function unitText(unit: string) {
  return unit;
}

/** Keeps what was typed: a number when it reads as one, else the text (the server names the problem). */
function readNumber(raw: string): number | string {
  const n = Number(raw);
  return raw.trim() !== "" && Number.isFinite(n) ? n : raw;
}

function NumberInput({ ctx, path, range, value }: { ctx: Ctx; path: Path; range: FieldRange; value: unknown }) {
  const id = useId();
  const error = ctx.errors[key(path)];
  const unit = unitText(range.unit);
  return (
    <div>
      <label htmlFor={id} className="mb-1 block text-sm font-medium">
        {range.label}
        {unit && <span className="font-normal text-ink-soft"> ({unit})</span>}
      </label>
      <input
        id={id}
        type="number"
        inputMode="decimal"
        className="field-input num"
        data-path={key(path)}
        value={value === undefined || value === null ? "" : String(value)}
        min={range.min}
        max={range.max}
        step={range.step}
        aria-invalid={error ? true : undefined}
        aria-describedby={`${id}-range${error ? ` ${id}-error` : ""}`}
        onChange={(e) => ctx.set(path, readNumber(e.target.value))}
      />
      <p id={`${id}-range`} className="mt-0.5 text-xs text-ink-faint">
        <span className="num">
          {range.min} to {range.max}
        </span>
        {range.unit && range.unit !== ":1" ? ` ${range.unit}` : ""}
      </p>
      <ErrorText id={`${id}-error`} error={error} />
    </div>
  );
}

const OPTION_LABELS: Record<string, string> = {
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
  tpdf: "TPDF",
  none: "None",
  "32f": "32-bit float",
};

function SelectInput({ ctx, path, label, value, options }: { ctx: Ctx; path: Path; label: string; value: unknown; options: readonly (string | number)[] }) {
  const id = useId();
  const error = ctx.errors[key(path)];
  return (
    <div>
      <label htmlFor={id} className="mb-1 block text-sm font-medium">
        {label}
      </label>
      <select
        id={id}
        className="field-input"
        data-path={key(path)}
        value={String(value ?? "")}
        aria-invalid={error ? true : undefined}
        onChange={(e) => {
          const picked = options.find((o) => String(o) === e.target.value);
          ctx.set(path, picked);
        }}
      >
        {options.map((o) => (
          <option key={String(o)} value={String(o)}>
            {OPTION_LABELS[String(o)] ?? String(o)}
          </option>
        ))}
      </select>
      <ErrorText id={`${id}-error`} error={error} />
    </div>
  );
}

function Toggle({ ctx, path, label, value }: { ctx: Ctx; path: Path; label: string; value: unknown }) {
  const error = ctx.errors[key(path)];
  return (
    <label className="inline-flex items-center gap-2 text-sm">
      <input type="checkbox" data-path={key(path)} checked={value === true} onChange={(e) => ctx.set(path, e.target.checked)} />
      {label}
      {error && <span className="text-danger">{error}</span>}
    </label>
  );
}

/**
 * A number that may be switched off (null or absent) or set to "auto". The
 * checkbox's label says what checked means: "Sidechain high-pass" and
 * "Target loudness" checked are on (with the number below), "Auto release"
 * checked is auto. Switched on, the number starts at `numberWhenOn` (empty:
 * the engineer types it).
 */
function OptionalNumber({
  ctx,
  path,
  range,
  value,
  off,
  checkboxLabel,
  checkedMeans,
  numberWhenOn,
}: {
  ctx: Ctx;
  path: Path;
  range: FieldRange;
  value: unknown;
  off: unknown;
  checkboxLabel: string;
  checkedMeans: "on" | "off";
  numberWhenOn: number | "";
}) {
  const isOff = value === off || value === undefined;
  const checked = checkedMeans === "on" ? !isOff : isOff;
  return (
    <div>
      <label className="mb-1 inline-flex items-center gap-2 text-sm">
        <input
          type="checkbox"
          checked={checked}
          data-path={`${key(path)}:${checkedMeans}`}
          onChange={(e) => {
            const on = checkedMeans === "on" ? e.target.checked : !e.target.checked;
            ctx.set(path, on ? numberWhenOn : off);
          }}
        />
        {checkboxLabel}
      </label>
      {isOff ? (
        <ErrorText id={`${key(path)}-error`} error={ctx.errors[key(path)]} />
      ) : (
        <NumberInput ctx={ctx} path={path} range={range} value={value} />
      )}
    </div>
  );
}

const grid = "grid gap-3 grid-cols-2 sm:grid-cols-3 lg:grid-cols-4";

function CompressFields({ ctx, path, values }: { ctx: Ctx; path: Path; values: Json }) {
  const f = COMPRESS_FIELDS;
  return (
    <div className={grid}>
      <NumberInput ctx={ctx} path={[...path, "thresholdDb"]} range={f.thresholdDb} value={values.thresholdDb} />
      <NumberInput ctx={ctx} path={[...path, "ratio"]} range={f.ratio} value={values.ratio} />
      <NumberInput ctx={ctx} path={[...path, "kneeDb"]} range={f.kneeDb} value={values.kneeDb} />
      <NumberInput ctx={ctx} path={[...path, "attackMs"]} range={f.attackMs} value={values.attackMs} />
      <OptionalNumber ctx={ctx} path={[...path, "releaseMs"]} range={f.releaseMs} value={values.releaseMs} off="auto" checkboxLabel="Auto release" checkedMeans="off" numberWhenOn={100} />
      <NumberInput ctx={ctx} path={[...path, "makeupDb"]} range={f.makeupDb} value={values.makeupDb} />
      <NumberInput ctx={ctx} path={[...path, "rmsWindowMs"]} range={f.rmsWindowMs} value={values.rmsWindowMs} />
      <OptionalNumber ctx={ctx} path={[...path, "sidechainHighPassHz"]} range={f.sidechainHighPassHz} value={values.sidechainHighPassHz} off={null} checkboxLabel="Sidechain high-pass" checkedMeans="on" numberWhenOn={100} />
    </div>
  );
}

function EqBands({ ctx, path, bands }: { ctx: Ctx; path: Path; bands: Json[] }) {
  return (
    <div className="space-y-3">
      {bands.map((band, b) => (
        <fieldset key={b} className="rounded-md border border-rule p-3">
          <legend className="px-1 text-sm font-medium">Band {b + 1}</legend>
          <div className={grid}>
            <SelectInput ctx={ctx} path={[...path, b, "shape"]} label="Shape" value={band.shape} options={EQ_SHAPES} />
            <NumberInput ctx={ctx} path={[...path, b, "freqHz"]} range={EQ_BAND_FIELDS.freqHz} value={band.freqHz} />
            <NumberInput ctx={ctx} path={[...path, b, "gainDb"]} range={EQ_BAND_FIELDS.gainDb} value={band.gainDb} />
            <NumberInput ctx={ctx} path={[...path, b, "q"]} range={EQ_BAND_FIELDS.q} value={band.q} />
            <SelectInput ctx={ctx} path={[...path, b, "channel"]} label="Channel" value={band.channel ?? "stereo"} options={EQ_CHANNELS} />
          </div>
          <button type="button" className="btn-quiet mt-2 text-sm" onClick={() => ctx.set(path, bands.filter((_, i) => i !== b))}>
            Remove band {b + 1}
          </button>
        </fieldset>
      ))}
      <ErrorText id={`${key(path)}-error`} error={ctx.errors[key(path)]} />
      <button type="button" className="btn-quiet text-sm" onClick={() => ctx.set(path, [...bands, newEqBand()])}>
        Add EQ band
      </button>
    </div>
  );
}

function MultibandFields({ ctx, path, stage }: { ctx: Ctx; path: Path; stage: Json }) {
  const crossovers = (stage.crossoversHz as unknown[]) ?? [];
  const bands = (stage.bands as Json[]) ?? [];
  // A band is added by splitting the top band at a new crossover above the last one.
  const addBand = () => {
    const last = Number(crossovers[crossovers.length - 1] ?? 100);
    ctx.set(path, { ...stage, crossoversHz: [...crossovers, Math.min(MULTIBAND_FIELDS.crossoverHz.max, Math.round(last * 2))], bands: [...bands, newMultibandBand()] });
  };
  const removeBand = (b: number) => {
    // Band b goes with the crossover below it (the first band with the one above it).
    const cut = b === 0 ? 0 : b - 1;
    ctx.set(path, { ...stage, crossoversHz: crossovers.filter((_, i) => i !== cut), bands: bands.filter((_, i) => i !== b) });
  };
  return (
    <div className="space-y-3">
      <div className={grid}>
        {crossovers.map((hz, i) => (
          <NumberInput key={i} ctx={ctx} path={[...path, "crossoversHz", i]} range={{ ...MULTIBAND_FIELDS.crossoverHz, label: `Crossover ${i + 1}` }} value={hz} />
        ))}
      </div>
      <ErrorText id={`${key(path)}-x-error`} error={ctx.errors[key([...path, "crossoversHz"])]} />
      {bands.map((band, b) => (
        <fieldset key={b} className="rounded-md border border-rule p-3">
          <legend className="px-1 text-sm font-medium">Band {b + 1}</legend>
          <div className="mb-2 flex flex-wrap gap-4">
            <Toggle ctx={ctx} path={[...path, "bands", b, "bypass"]} label="Bypass band" value={band.bypass} />
            <Toggle ctx={ctx} path={[...path, "bands", b, "solo"]} label="Solo" value={band.solo} />
          </div>
          <CompressFields ctx={ctx} path={[...path, "bands", b]} values={band} />
          {bands.length > 2 && (
            <button type="button" className="btn-quiet mt-2 text-sm" onClick={() => removeBand(b)}>
              Remove band {b + 1}
            </button>
          )}
        </fieldset>
      ))}
      <ErrorText id={`${key(path)}-b-error`} error={ctx.errors[key([...path, "bands"])]} />
      {crossovers.length < MAX_CROSSOVERS && (
        <button type="button" className="btn-quiet text-sm" onClick={addBand}>
          Add band
        </button>
      )}
    </div>
  );
}

function StageFields({ ctx, index, stage }: { ctx: Ctx; index: number; stage: Json }) {
  const path: Path = ["stages", index];
  switch (stage.type) {
    case "trim":
      return (
        <div className={grid}>
          <NumberInput ctx={ctx} path={[...path, "gainDb"]} range={TRIM_FIELDS.gainDb} value={stage.gainDb} />
        </div>
      );
    case "eq":
      return <EqBands ctx={ctx} path={[...path, "bands"]} bands={(stage.bands as Json[]) ?? []} />;
    case "saturate":
      return (
        <div className={grid}>
          <NumberInput ctx={ctx} path={[...path, "driveDb"]} range={SATURATE_FIELDS.driveDb} value={stage.driveDb} />
          <NumberInput ctx={ctx} path={[...path, "blend"]} range={SATURATE_FIELDS.blend} value={stage.blend} />
          <SelectInput ctx={ctx} path={[...path, "oversample"]} label="Oversampling (×)" value={stage.oversample ?? 4} options={[2, 4]} />
        </div>
      );
    case "compress":
      return <CompressFields ctx={ctx} path={path} values={stage} />;
    case "multiband":
      return <MultibandFields ctx={ctx} path={path} stage={stage} />;
    case "limit":
      return (
        <div className="space-y-2">
          <div className={grid}>
            <NumberInput ctx={ctx} path={[...path, "inputGainDb"]} range={LIMIT_FIELDS.inputGainDb} value={stage.inputGainDb} />
            <NumberInput ctx={ctx} path={[...path, "ceilingDbtp"]} range={LIMIT_FIELDS.ceilingDbtp} value={stage.ceilingDbtp} />
            <NumberInput ctx={ctx} path={[...path, "lookaheadMs"]} range={LIMIT_FIELDS.lookaheadMs} value={stage.lookaheadMs} />
            <NumberInput ctx={ctx} path={[...path, "releaseMs"]} range={LIMIT_FIELDS.releaseMs} value={stage.releaseMs} />
          </div>
          <Toggle ctx={ctx} path={[...path, "truePeak"]} label="True-peak detection" value={stage.truePeak ?? true} />
        </div>
      );
    default:
      return <p className="text-sm text-danger">Unknown stage type {String(stage.type)}</p>;
  }
}

const SAMPLE_RATES = [44100, 48000, 88200, 96000, 176400, 192000];

function OutputFields({ ctx, output }: { ctx: Ctx; output: Json }) {
  const id = useId();
  const rateError = ctx.errors["output.sampleRate"];
  return (
    <div className={grid}>
      <div>
        <label htmlFor={id} className="mb-1 block text-sm font-medium">
          Sample rate <span className="font-normal text-ink-soft">(Hz)</span>
        </label>
        <select
          id={id}
          className="field-input"
          data-path="output.sampleRate"
          value={output.sampleRate === undefined ? "" : String(output.sampleRate)}
          onChange={(e) => ctx.set(["output", "sampleRate"], e.target.value === "" ? undefined : Number(e.target.value))}
        >
          <option value="">Same as the mix</option>
          {SAMPLE_RATES.map((rate) => (
            <option key={rate} value={rate}>
              {rate}
            </option>
          ))}
        </select>
        <ErrorText id={`${id}-error`} error={rateError} />
      </div>
      <SelectInput ctx={ctx} path={["output", "bitDepth"]} label="Bit depth" value={output.bitDepth ?? 24} options={BIT_DEPTHS} />
      <SelectInput ctx={ctx} path={["output", "dither"]} label="Dither" value={output.dither ?? "tpdf"} options={DITHERS} />
      <OptionalNumber ctx={ctx} path={["output", "targetLufs"]} range={OUTPUT_FIELDS.targetLufs} value={output.targetLufs} off={undefined} checkboxLabel="Target loudness" checkedMeans="on" numberWhenOn="" />
    </div>
  );
}

export type EditableChain = { stages: Json[]; output: Json };

export function ChainEditor({ initial, errors, formError, submitting }: { initial: EditableChain; errors: Errors; formError?: string; submitting: boolean }) {
  const [chain, setChain] = useState<EditableChain>(() => ({ stages: initial.stages ?? [], output: initial.output ?? {} }));
  const [addType, setAddType] = useState<string>("compress");
  const ctx: Ctx = { errors, set: (path, value) => setChain((c) => setAt(c, path, value)) };
  const move = (from: number, to: number) =>
    setChain((c) => {
      const stages = [...c.stages];
      const [stage] = stages.splice(from, 1);
      stages.splice(to, 0, stage);
      return { ...c, stages };
    });
  const known = new Set(Object.keys(errors).filter((k) => k.startsWith("stages") || k.startsWith("output")));
  return (
    <Form method="post" noValidate className="space-y-4" aria-label="Chain">
      <input type="hidden" name="intent" value="save" />
      <input type="hidden" name="params" value={JSON.stringify(chain)} />
      {(formError || Object.keys(errors).length > 0) && (
        <div className="rounded-md border border-danger/40 bg-danger-wash px-3 py-2 text-sm text-danger" role="alert">
          <p>{formError ?? "The chain was not saved: correct the fields marked below."}</p>
          {Object.keys(errors).some((k) => !known.has(k)) && (
            <ul className="mt-1 list-disc pl-5">
              {Object.entries(errors)
                .filter(([k]) => !known.has(k))
                .map(([k, message]) => (
                  <li key={k}>
                    {k}: {message}
                  </li>
                ))}
            </ul>
          )}
        </div>
      )}
      {chain.stages.length === 0 && <p className="text-sm text-ink-soft">No stages yet: the mix passes through unchanged.</p>}
      <ol className="space-y-4">
        {chain.stages.map((stage, i) => (
          <li key={i} className="card p-4" aria-label={`Stage ${i + 1}: ${STAGE_LABELS[String(stage.type)] ?? String(stage.type)}`}>
            <div className="mb-3 flex flex-wrap items-center justify-between gap-2">
              <h3 className="font-semibold">
                <span className="num text-ink-soft">{i + 1}.</span> {STAGE_LABELS[String(stage.type)] ?? String(stage.type)}
                {stage.bypass === true && <span className="ml-2 text-xs font-normal text-ink-soft uppercase">bypassed</span>}
              </h3>
              <div className="flex flex-wrap items-center gap-2">
                <Toggle ctx={ctx} path={["stages", i, "bypass"]} label="Bypass" value={stage.bypass} />
                <button type="button" className="btn-quiet text-sm" disabled={i === 0} onClick={() => move(i, i - 1)} aria-label={`Move stage ${i + 1} up`}>
                  ↑ Up
                </button>
                <button type="button" className="btn-quiet text-sm" disabled={i === chain.stages.length - 1} onClick={() => move(i, i + 1)} aria-label={`Move stage ${i + 1} down`}>
                  ↓ Down
                </button>
                <button type="button" className="btn-quiet text-sm" onClick={() => setChain((c) => ({ ...c, stages: c.stages.filter((_, j) => j !== i) }))} aria-label={`Remove stage ${i + 1}`}>
                  Remove
                </button>
              </div>
            </div>
            <ErrorText id={`stage-${i}-error`} error={errors[`stages[${i}]`]} />
            <StageFields ctx={ctx} index={i} stage={stage} />
          </li>
        ))}
      </ol>
      <div className="flex flex-wrap items-end gap-2">
        <div>
          <label htmlFor="add-stage-type" className="mb-1 block text-sm font-medium">
            New stage
          </label>
          <select id="add-stage-type" className="field-input" value={addType} onChange={(e) => setAddType(e.target.value)}>
            {STAGE_TYPES.map((t) => (
              <option key={t} value={t}>
                {STAGE_LABELS[t]}
              </option>
            ))}
          </select>
        </div>
        <button type="button" className="btn-quiet" onClick={() => setChain((c) => ({ ...c, stages: [...c.stages, newStage(addType)] }))}>
          Add stage
        </button>
      </div>
      <section className="card p-4" aria-labelledby="output-settings">
        <h3 id="output-settings" className="mb-3 font-semibold">
          Output
        </h3>
        <OutputFields ctx={ctx} output={chain.output} />
      </section>
      <button type="submit" className="btn-primary" disabled={submitting}>
        {submitting ? "Saving…" : "Save as new revision"}
      </button>
    </Form>
  );
}
