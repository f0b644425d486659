// LiveChain: a chain that runs while its settings change (the listening
// desk). Every stage is one processor made by buildChain (the modules the
// renderer runs), kept for the whole session:
//   - Settings changes keep the processors' state and glide: the numbers
//     move from the old to the new values over GLIDE_MS in steps of
//     GLIDE_STEP_FRAMES (frequencies, times, Q and ratio geometrically,
//     dB and blend linearly), each step handed to the processor's
//     setSettings / setBands / setGainDb; the last step writes the new
//     values exactly. The first step lands within GLIDE_STEP_FRAMES of the
//     change, far inside the 50 ms the desk promises.
//   - What a processor fixes at construction (band list and shapes, EQ
//     channels, lookahead, true-peak detection, oversampling, crossovers,
//     the compressor's detector window, side-chain filter, release mode and
//     gain path) makes a new processor for that stage: its state starts
//     from zero, and if its latency differs the chain's total latency
//     changes (an audible jump of a few frames). See the decision note.
//   - A bypassed stage keeps running on its input (so it comes back warm)
//     while its output is replaced by that input delayed by the stage's own
//     latency, so bypass never moves the audio in time. The switch is a
//     FADE_FRAMES crossfade; once it is over, the output is the same to the
//     bit as buildChain's with the same flags (the stage left out), delayed
//     by the bypassed stages' latency.
//   - Multiband band bypass and solo are applied at once through the
//     stage's setSettings.
//   - Push (push.ts) swaps a stage's target for its pushed copy; the chain's
//     own settings (`user`) are never written, so releasing Push glides back
//     to them and the last step restores them bit for bit.
//   - Bypass all crossfades to the input delayed by the chain's latency.
// process() allocates nothing; setChain/setPush/setBypassAll may (they run
// when a message arrives, not per block).

import { buildChain } from "../chain/build-chain.ts";
import type { EqStage as EqStageProcessor } from "../chain/eq-stage.ts";
import type { Chain, Stage } from "../chain/schema.ts";
import type { TrimStage as TrimStageProcessor } from "../chain/trim-stage.ts";
import { compressorLiveChangeable, type Compressor } from "../dynamics/compressor.ts";
import type { MultibandCompressor } from "../dynamics/multiband.ts";
import type { Limiter } from "../limit/limiter.ts";
import type { ResonanceTamer } from "../resonance/resonance.ts";
import type { TapeStage as TapeStageProcessor } from "../tape/tape.ts";
import type { GainReductionSource, Planar, Processor } from "../processor.ts";
import type { Saturator } from "../saturate/saturator.ts";
import { pushStage } from "./push.ts";

export const GLIDE_MS = 20;
export const GLIDE_STEP_FRAMES = 16;
export const FADE_FRAMES = 64;

/** A fixed delay of `frames` frames, in place, per channel. */
export class DelayLine {
  private readonly lines: Float64Array[];
  private pos = 0;
  constructor(readonly frames: number, channels: number) {
    this.lines = Array.from({ length: channels }, () => new Float64Array(Math.max(1, frames)));
  }
  reset(): void {
    for (const l of this.lines) l.fill(0);
    this.pos = 0;
  }
  process(channels: Planar, frames: number): void {
    const d = this.frames;
    if (d === 0) return;
    let p = 0;
    for (let c = 0; c < this.lines.length; c++) {
      const line = this.lines[c], x = channels[c];
      p = this.pos;
      for (let i = 0; i < frames; i++) {
        const v = line[p];
        line[p] = x[i];
        x[i] = v;
        if (++p === d) p = 0;
      }
    }
    this.pos = p;
  }
}

/** A number inside a settings object, found by its container and key. */
interface Leaf {
  obj: Record<string, unknown>;
  key: string;
  geometric: boolean;
}

interface Slot {
  index: number;
  type: Stage["type"];
  /** Settings the processor was built with (what it fixes at construction). */
  built: Stage;
  /** Settings now in the processor (mutated in place while gliding). */
  applied: Stage;
  /** The chain's own settings. */
  user: Stage;
  pushed: boolean;
  processor: Processor;
  gr: GainReductionSource | null;
  grScratch: Float64Array;
  dry: DelayLine;
  bypass: boolean;
  /** 0 = processed, 1 = bypassed; moves by 1/FADE_FRAMES per frame towards `bypass`. */
  fade: number;
  leaves: Leaf[];
  from: Float64Array;
  to: Float64Array;
  glideFrames: number;
  glideDone: number;
}

const GEOMETRIC_KEYS = /(Hz|Ms|^q|ratio)$/;

function clone<T>(v: T): T {
  return JSON.parse(JSON.stringify(v)) as T;
}

/** Same structure apart from numbers and the bypass/solo flags. */
function sameShape(a: unknown, b: unknown): boolean {
  if (typeof a === "number" && typeof b === "number") return true;
  if (Array.isArray(a) || Array.isArray(b)) {
    if (!Array.isArray(a) || !Array.isArray(b) || a.length !== b.length) return false;
    return a.every((x, i) => sameShape(x, b[i]));
  }
  if (a && b && typeof a === "object" && typeof b === "object") {
    const ka = Object.keys(a).filter((k) => k !== "bypass" && k !== "solo").sort();
    const kb = Object.keys(b).filter((k) => k !== "bypass" && k !== "solo").sort();
    if (ka.join() !== kb.join()) return false;
    return ka.every((k) => sameShape((a as Record<string, unknown>)[k], (b as Record<string, unknown>)[k]));
  }
  return a === b;
}

function collectLeaves(v: unknown, out: Leaf[]): void {
  if (Array.isArray(v)) for (const x of v) collectLeaves(x, out);
  else if (v && typeof v === "object") {
    const o = v as Record<string, unknown>;
    for (const key of Object.keys(o)) {
      if (typeof o[key] === "number") out.push({ obj: o, key, geometric: GEOMETRIC_KEYS.test(key) });
      else collectLeaves(o[key], out);
    }
  }
}

function numbersOf(v: unknown, out: number[]): number[] {
  if (Array.isArray(v)) for (const x of v) numbersOf(x, out);
  else if (v && typeof v === "object") {
    const o = v as Record<string, unknown>;
    for (const key of Object.keys(o)) {
      if (typeof o[key] === "number") out.push(o[key] as number);
      else numbersOf(o[key], out);
    }
  }
  return out;
}

/** Copies the flags (stage bypass, band bypass/solo) of `from` into `to` (same shape). */
function copyFlags(from: Stage, to: Stage): void {
  to.bypass = from.bypass;
  if (from.type === "multiband" && to.type === "multiband") {
    from.bands.forEach((b, i) => {
      to.bands[i].bypass = b.bypass;
      to.bands[i].solo = b.solo;
    });
  }
}

/** Whether a processor built with `built` can take `next` live (no new processor). */
function liveChangeable(built: Stage, next: Stage, sampleRate: number): boolean {
  if (built.type !== next.type || !sameShape(built, next)) return false;
  switch (built.type) {
    case "trim":
      return true;
    case "eq":
      return true; // shapes and channels are compared by sameShape (strings)
    case "saturate":
      return built.oversample === (next as typeof built).oversample;
    case "compress":
      return compressorLiveChangeable(built, next as typeof built, sampleRate);
    case "multiband": {
      const n = next as typeof built;
      return built.crossoversHz.every((hz, i) => hz === n.crossoversHz[i]) && built.bands.every((b, i) => compressorLiveChangeable(b, n.bands[i], sampleRate));
    }
    case "limit": {
      const n = next as typeof built;
      return built.lookaheadMs === n.lookaheadMs && built.truePeak === n.truePeak;
    }
    case "resonance": {
      const n = next as typeof built;
      return built.lowHz === n.lowHz && built.highHz === n.highHz;
    }
    case "tape": {
      const n = next as typeof built;
      return built.oversample === n.oversample && (built.rolloffHz === null) === (n.rolloffHz === null);
    }
  }
}

export interface LiveStageInfo {
  index: number;
  type: Stage["type"];
  traceNames: readonly string[];
}

export class LiveChain {
  private slots: Slot[] = [];
  private chainLatency = 0;
  private allDry: DelayLine;
  private readonly allDryBuf: Float64Array[];
  private readonly dryBuf: Float64Array[];
  private bypassAll = false;
  private allFade = 0;
  private readonly view: Float64Array[];
  private output: Chain["output"];

  constructor(
    chain: Chain,
    readonly sampleRate: number,
    readonly channels: number,
    readonly maxBlockFrames = 128,
    /** Glide time; 0 switches settings in one step (tests use it to show what the glide prevents). */
    private readonly glideMs = GLIDE_MS,
  ) {
    this.dryBuf = Array.from({ length: channels }, () => new Float64Array(maxBlockFrames));
    this.allDryBuf = Array.from({ length: channels }, () => new Float64Array(maxBlockFrames));
    this.view = Array.from({ length: channels }, () => new Float64Array(0));
    this.output = chain.output;
    this.allDry = new DelayLine(0, channels);
    this.rebuild(chain);
  }

  /** Frames the chain delays the audio (every stage's, bypassed or not). */
  get latencyFrames(): number {
    return this.chainLatency;
  }

  /** The stages in chain order with their gain-reduction traces (for meters). */
  get stages(): LiveStageInfo[] {
    return this.slots.map((s) => ({ index: s.index, type: s.type, traceNames: s.gr ? s.gr.traceNames : [] }));
  }

  /** The chain as the user set it (Push not included). */
  get chain(): Chain {
    return { stages: this.slots.map((s) => clone(s.user)), output: this.output };
  }

  /** The settings a stage's processor holds now (Push and glides included). */
  appliedSettings(slotIndex: number): Stage {
    return clone(this.slots[slotIndex].applied);
  }

  /** True while any stage is still gliding. */
  get gliding(): boolean {
    return this.slots.some((s) => s.glideDone < s.glideFrames);
  }

  isPushed(stageIndex: number): boolean {
    return this.slots[stageIndex]?.pushed ?? false;
  }

  private makeSlot(stage: Stage, index: number): Slot {
    // Every stage is built active (flags are applied afterwards, live), and
    // a multiband stage with every band active, so each band has its compressor.
    const active = clone(stage);
    active.bypass = false;
    if (active.type === "multiband") for (const b of active.bands) b.bypass = b.solo = false;
    const built = buildChain({ stages: [active], output: this.output }, this.sampleRate, this.channels, this.maxBlockFrames).stages[0];
    const slot: Slot = {
      index,
      type: stage.type,
      built: clone(stage),
      applied: clone(stage),
      user: clone(stage),
      pushed: false,
      processor: built.processor,
      gr: built.gainReduction,
      grScratch: new Float64Array(built.gainReduction ? built.gainReduction.traceNames.length : 0),
      dry: new DelayLine(built.processor.latencyFrames, this.channels),
      bypass: stage.bypass,
      fade: stage.bypass ? 1 : 0,
      leaves: [],
      from: new Float64Array(0),
      to: new Float64Array(0),
      glideFrames: 0,
      glideDone: 0,
    };
    if (stage.type === "multiband") this.apply(slot);
    return slot;
  }

  private rebuild(chain: Chain): void {
    this.output = chain.output;
    this.slots = chain.stages.map((s, i) => this.makeSlot(s, i));
    this.updateLatency();
  }

  private updateLatency(): void {
    const latency = this.slots.reduce((a, s) => a + s.processor.latencyFrames, 0);
    if (latency !== this.chainLatency || this.allDry.frames !== latency) {
      this.chainLatency = latency;
      this.allDry = new DelayLine(latency, this.channels);
    }
  }

  /** Hands `slot.applied` to its processor (no allocation apart from the EQ's coefficient objects). */
  private apply(slot: Slot): void {
    const s = slot.applied, p = slot.processor, sr = this.sampleRate;
    switch (s.type) {
      case "trim":
        (p as TrimStageProcessor).setGainDb(s.gainDb);
        break;
      case "eq":
        (p as EqStageProcessor).setBands(sr, s.bands);
        break;
      case "saturate":
        (p as Saturator).setSettings(s);
        break;
      case "compress":
        (p as Compressor).setSettings(sr, s);
        break;
      case "multiband":
        (p as MultibandCompressor).setSettings(s);
        break;
      case "limit":
        (p as Limiter).setSettings(sr, s);
        break;
      case "resonance":
        (p as ResonanceTamer).setSettings(sr, s);
        break;
      case "tape":
        (p as TapeStageProcessor).setSettings(sr, s);
        break;
    }
  }

  /** Starts a glide of `slot.applied` towards `target` (same shape). */
  private glideTo(slot: Slot, target: Stage): void {
    copyFlags(target, slot.applied);
    const leaves: Leaf[] = [];
    collectLeaves(slot.applied, leaves);
    const to = numbersOf(target, []);
    slot.leaves = leaves;
    slot.from = Float64Array.from(leaves.map((l) => l.obj[l.key] as number));
    slot.to = Float64Array.from(to);
    const changed = slot.from.some((v, i) => !Object.is(v, slot.to[i]));
    slot.glideFrames = changed ? Math.max(1, Math.round((this.glideMs / 1000) * this.sampleRate)) : 0;
    slot.glideDone = 0;
    // Flags act at once; numbers follow step by step in process().
    this.apply(slot);
  }

  /** Any settings change: glided where the processors allow it, new processors where they do not. */
  setChain(chain: Chain): void {
    const sameStages = chain.stages.length === this.slots.length && chain.stages.every((s, i) => s.type === this.slots[i].type);
    if (!sameStages) {
      const bypassAll = this.bypassAll;
      this.rebuild(chain);
      this.bypassAll = bypassAll;
      return;
    }
    this.output = chain.output;
    let rebuilt = false;
    chain.stages.forEach((stage, i) => {
      const slot = this.slots[i];
      if (!liveChangeable(slot.built, stage, this.sampleRate)) {
        const pushed = slot.pushed;
        const fresh = this.makeSlot(stage, i);
        fresh.fade = slot.fade;
        this.slots[i] = fresh;
        if (pushed) this.setPush(i, true);
        rebuilt = true;
        return;
      }
      slot.user = clone(stage);
      slot.bypass = stage.bypass;
      this.glideTo(slot, slot.pushed ? pushStage(slot.user) : slot.user);
    });
    if (rebuilt) this.updateLatency();
  }

  /** Push on or off for the stage at `stageIndex` (glided both ways). */
  setPush(stageIndex: number, on: boolean): void {
    const slot = this.slots[stageIndex];
    if (!slot || slot.pushed === on) return;
    slot.pushed = on;
    this.glideTo(slot, on ? pushStage(slot.user) : slot.user);
  }

  setBypassAll(on: boolean): void {
    this.bypassAll = on;
  }

  /** Gain reduction per stage since the last call (zeros for bypassed stages), one array per stage, traces in order. */
  takeGainReductionDb(out: Float64Array[]): void {
    for (let i = 0; i < this.slots.length; i++) {
      const slot = this.slots[i], o = out[i];
      if (!slot.gr || !o) continue;
      slot.gr.takeGainReductionDb(o);
      if (slot.bypass || this.bypassAll) o.fill(0);
    }
  }

  reset(): void {
    for (const s of this.slots) {
      s.processor.reset();
      s.dry.reset();
    }
    this.allDry.reset();
  }

  process(channels: Planar, frames: number): void {
    if (frames > this.maxBlockFrames) throw new RangeError(`block of ${frames} frames exceeds ${this.maxBlockFrames}`);
    const nch = this.channels;
    for (let c = 0; c < nch; c++) this.allDryBuf[c].set(channels[c].subarray(0, frames));
    let gliding = false;
    for (const s of this.slots) if (s.glideDone < s.glideFrames) gliding = true;
    if (!gliding) this.runSlots(channels, frames);
    else {
      // Glide steps land at fixed offsets within the glide; the block is cut at them.
      for (let start = 0; start < frames; start += GLIDE_STEP_FRAMES) {
        const n = Math.min(GLIDE_STEP_FRAMES, frames - start);
        for (const s of this.slots) if (s.glideDone < s.glideFrames) this.stepGlide(s, n);
        for (let c = 0; c < nch; c++) this.view[c] = channels[c].subarray(start, start + n);
        this.runSlots(this.view, n);
      }
    }
    // Bypass all: the input delayed by the chain's latency, crossfaded.
    this.allDry.process(this.allDryBuf, frames);
    this.allFade = mixFade(channels, this.allDryBuf, 0, frames, this.allFade, this.bypassAll, nch);
  }

  private stepGlide(s: Slot, n: number): void {
    s.glideDone = Math.min(s.glideFrames, s.glideDone + n);
    const leaves = s.leaves, from = s.from, to = s.to;
    if (s.glideDone >= s.glideFrames) {
      for (let k = 0; k < leaves.length; k++) leaves[k].obj[leaves[k].key] = to[k];
    } else {
      const t = s.glideDone / s.glideFrames;
      for (let k = 0; k < leaves.length; k++) {
        const a = from[k], b = to[k];
        leaves[k].obj[leaves[k].key] = leaves[k].geometric && a > 0 && b > 0 ? a * Math.pow(b / a, t) : a + (b - a) * t;
      }
    }
    this.apply(s);
  }

  /** Runs every slot over `frames` frames of `channels` (already cut to the step). */
  private runSlots(channels: Planar, frames: number): void {
    const nch = this.channels, dry = this.dryBuf;
    for (const s of this.slots) {
      // A latency-bearing stage's delay line always takes its input, so a bypass switched on later starts from the right audio.
      const needDry = s.bypass || s.fade > 0 || s.dry.frames > 0;
      if (needDry) for (let c = 0; c < nch; c++) dry[c].set(channels[c].subarray(0, frames));
      s.processor.process(channels, frames);
      if (needDry) {
        s.dry.process(dry, frames);
        s.fade = mixFade(channels, dry, 0, frames, s.fade, s.bypass, nch);
      }
    }
  }
}

/**
 * Crossfade between `wet` (in place in `out`) and `dry` by a fade state
 * (0 = wet, 1 = dry) moving 1/FADE_FRAMES per frame towards `toDry`.
 * Returns the new state. At rest the output is exactly one of the two.
 */
function mixFade(out: Planar, dry: Planar, start: number, frames: number, fade: number, toDry: boolean, nch: number): number {
  const target = toDry ? 1 : 0;
  if (fade === target) {
    if (toDry) for (let c = 0; c < nch; c++) out[c].set(dry[c].subarray(start, start + frames), start);
    return fade;
  }
  const step = (toDry ? 1 : -1) / FADE_FRAMES;
  let f = fade;
  for (let i = 0; i < frames; i++) {
    f += step;
    if (toDry ? f > 1 : f < 0) f = target;
    for (let c = 0; c < nch; c++) out[c][start + i] = out[c][start + i] * (1 - f) + dry[c][start + i] * f;
  }
  return f;
}
