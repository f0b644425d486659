// DeskCore: everything the listening desk's audio thread does, in plain
// TypeScript so Node tests and the AudioWorklet run the same code.
//
// Stream: the processors start at the pre-roll frame of the region
// (dsp/render/preroll.ts, the rule offline previews follow) and run through
// the pre-roll and the chain's first latency frames before anything is
// heard (warm()), so the first frame heard is the region's first frame in
// the state the renderer has there. The region then loops: after its last
// frame the chain is fed `latency` frames of silence (as the renderer feeds
// after the end, so the region's last frames equal the print's too), then
// the region's first frame again, the processors keeping their state.
// Seeking moves the input; the state carries on (no new pre-roll).
//
// Around the current chain: a compare chain run side by side on the same
// input (listenTo switches with a short crossfade), Bypass all (the input
// delayed by the chain latency), Match (a gain that keeps what is heard at
// the short-term loudness of the unprocessed input, smoothed over seconds,
// worked out for both chains all the time so every switch is level-matched
// at once), meters, and the safety clamp: nothing leaves above 0 dBFS and
// nothing that is not a finite number leaves at all. The clamp has no
// switch.

import type { Chain } from "../chain/schema.ts";
import { LoudnessMeter } from "../loudness/meter.ts";
import { TruePeakDetector } from "../loudness/true-peak.ts";
import type { Planar } from "../processor.ts";
import { prerollStartFrame } from "../render/preroll.ts";
import { DelayLine, FADE_FRAMES, LiveChain, type LiveStageInfo } from "./live-chain.ts";
import { GR_PEAK_HOLD_S, M, MAX_TRACES, METER_LENGTH, METER_RATE_HZ } from "./meter-layout.ts";

export const MATCH_TIME_CONSTANT_S = 2;
/** Short-term loudness below this (silence) leaves the Match offset where it is. */
const MATCH_FLOOR_LUFS = -70;
const CORRELATION_TIME_S = 0.3;
/** Room for the momentary powers behind the integrated loudness since play (one per 100 ms: 4 hours). */
const MAX_GATING_BLOCKS = 4 * 36000;
const LOUDNESS_OFFSET_DB = -0.691;

export interface DeskCoreOptions {
  sampleRate: number;
  channels: number;
  /** Planar audio of song frames [audioStartFrame, audioStartFrame + audio[0].length). */
  audio: Float32Array[];
  audioStartFrame: number;
  regionStartFrame: number;
  regionEndFrame: number;
  chain: Chain;
  maxBlockFrames?: number;
  /** Where the meter snapshots go (e.g. a view on a SharedArrayBuffer); METER_LENGTH values. */
  meters?: Float64Array;
}

export interface DeskLayout {
  stages: LiveStageInfo[];
  /** Over threshold for the overs count: the last active limiter's ceiling, else 0 dBTP. */
  oversAboveDbtp: number;
  latencyFrames: number;
}

export class DeskCore {
  readonly sampleRate: number;
  readonly channels: number;
  readonly maxBlockFrames: number;
  readonly meters: Float64Array;
  private readonly audio: Float32Array[];
  private readonly audioStartFrame: number;
  private regionStart: number;
  private regionEnd: number;
  private current: LiveChain;
  private compare: LiveChain | null = null;
  /** Stream position of the next input frame: 0..N−1 the region, N..N+L−1 the silent tail. */
  private inS = 0;
  private latency = 0;
  private playing = false;
  private listenCompare = false;
  private listenFade = 0;
  private bypassAll = false;
  private bypassFade = 0;
  private match = true;
  private matchCurDb = 0;
  private matchSeen = false;
  private matchCmpDb = 0;
  private gainCur = 1;
  private gainCmp = 1;
  // Buffers.
  private readonly input: Float64Array[];
  private readonly work: Float64Array[];
  private readonly cmpWork: Float64Array[];
  private readonly dryWork: Float64Array[];
  private curPad: DelayLine;
  private cmpPad: DelayLine;
  private dryPad: DelayLine;
  // Meters.
  private readonly meterIn: LoudnessMeter;
  private readonly meterCur: LoudnessMeter;
  private readonly meterCmp: LoudnessMeter;
  private readonly truePeak: TruePeakDetector;
  private readonly peaks: Float64Array;
  private truePeakMax = 0;
  private overs = 0;
  private overState = false;
  private oversAbove = 1;
  private sumLL = 0;
  private sumRR = 0;
  private sumLR = 0;
  private readonly corrCoeff: number;
  private readonly gating = new Float64Array(MAX_GATING_BLOCKS);
  private gatingCount = 0;
  private framesTo100Ms = 0;
  private integratedLufs = -Infinity;
  private grArrays: Float64Array[] = [];
  private readonly grNow = new Float64Array(MAX_TRACES);
  private readonly grPeak = new Float64Array(MAX_TRACES);
  private readonly grPeakAge = new Float64Array(MAX_TRACES);
  private traceCount = 0;
  private limiterTrace = -1;
  private framesToPublish: number;
  private readonly publishFrames: number;
  droppedBlocks = 0;
  lateBlocks = 0;
  private seq = 0;
  private layoutCache: DeskLayout | null = null;

  constructor(o: DeskCoreOptions) {
    this.sampleRate = o.sampleRate;
    this.channels = o.channels;
    this.maxBlockFrames = o.maxBlockFrames ?? 128;
    this.meters = o.meters ?? new Float64Array(METER_LENGTH);
    this.audio = o.audio;
    this.audioStartFrame = o.audioStartFrame;
    this.regionStart = o.regionStartFrame;
    this.regionEnd = o.regionEndFrame;
    this.checkRegion();
    const planar = () => Array.from({ length: o.channels }, () => new Float64Array(this.maxBlockFrames));
    this.input = planar();
    this.work = planar();
    this.cmpWork = planar();
    this.dryWork = planar();
    this.current = new LiveChain(o.chain, o.sampleRate, o.channels, this.maxBlockFrames);
    this.curPad = new DelayLine(0, o.channels);
    this.cmpPad = new DelayLine(0, o.channels);
    this.dryPad = new DelayLine(0, o.channels);
    const meter = () => new LoudnessMeter(o.sampleRate, o.channels, { truePeak: false, history: false, gridMs: o.sampleRate % 100 === 0 ? 10 : 100 });
    this.meterIn = meter();
    this.meterCur = meter();
    this.meterCmp = meter();
    this.truePeak = new TruePeakDetector(o.sampleRate, o.channels, this.maxBlockFrames);
    this.peaks = new Float64Array(this.maxBlockFrames);
    this.corrCoeff = Math.exp(-1 / (CORRELATION_TIME_S * o.sampleRate));
    this.publishFrames = Math.round(o.sampleRate / METER_RATE_HZ);
    this.framesToPublish = this.publishFrames;
    this.alignLatency();
  }

  private checkRegion(): void {
    const audioEnd = this.audioStartFrame + this.audio[0].length;
    if (!(this.regionStart >= this.audioStartFrame && this.regionEnd <= audioEnd && this.regionEnd > this.regionStart)) {
      throw new RangeError(`region ${this.regionStart}–${this.regionEnd} is not inside the loaded audio ${this.audioStartFrame}–${audioEnd}`);
    }
  }

  /** Latency of what is heard: the larger of the two chains'; the other and the dry path are padded to it. */
  private alignLatency(): void {
    const lc = this.current.latencyFrames, lk = this.compare?.latencyFrames ?? lc;
    const l = Math.max(lc, lk);
    if (this.curPad.frames !== l - lc) this.curPad = new DelayLine(l - lc, this.channels);
    if (this.cmpPad.frames !== l - lk) this.cmpPad = new DelayLine(l - lk, this.channels);
    if (this.dryPad.frames !== l) this.dryPad = new DelayLine(l, this.channels);
    this.latency = l;
    this.layoutCache = null;
    this.grArrays = this.current.stages.map((s) => new Float64Array(s.traceNames.length));
    this.traceCount = Math.min(MAX_TRACES, this.grArrays.reduce((a, g) => a + g.length, 0));
    const chain = this.current.chain;
    let lastLimit = -1;
    chain.stages.forEach((s, i) => {
      if (s.type === "limit" && !s.bypass) lastLimit = i;
    });
    let k = 0;
    this.limiterTrace = -1;
    this.current.stages.forEach((s, i) => {
      if (i === lastLimit) this.limiterTrace = k;
      k += s.traceNames.length;
    });
    const ceiling = lastLimit >= 0 ? (chain.stages[lastLimit] as { ceilingDbtp: number }).ceilingDbtp : 0;
    this.oversAbove = 10 ** (ceiling / 20);
  }

  /** Stages, trace names and the overs threshold (changes when the chain's structure does). */
  get layout(): DeskLayout {
    if (!this.layoutCache) {
      this.layoutCache = { stages: this.current.stages, oversAboveDbtp: 20 * Math.log10(this.oversAbove), latencyFrames: this.latency };
    }
    return this.layoutCache;
  }

  get latencyFrames(): number {
    return this.latency;
  }

  get chain(): LiveChain {
    return this.current;
  }

  get compareChain(): LiveChain | null {
    return this.compare;
  }

  /** Song time (s) of the frame heard next. */
  get positionS(): number {
    const n = this.regionEnd - this.regionStart, period = n + this.latency;
    let outS = this.inS - this.latency;
    if (outS < 0) outS += period;
    return (this.regionStart + Math.min(outS, n)) / this.sampleRate;
  }

  /**
   * Runs the processors through the pre-roll and the chain's latency
   * without output, so the next frame heard is the region's first.
   */
  warm(): void {
    const from = Math.max(this.audioStartFrame, prerollStartFrame(this.regionStart, this.sampleRate));
    const block = this.maxBlockFrames, nch = this.channels;
    for (let f = from; f < this.regionStart; f += block) {
      const n = Math.min(block, this.regionStart - f);
      for (let c = 0; c < nch; c++) {
        const src = this.audio[c], x = this.input[c], o = f - this.audioStartFrame;
        for (let i = 0; i < n; i++) x[i] = src[o + i];
      }
      this.runChains(n);
    }
    this.inS = 0;
    for (let left = this.latency; left > 0; ) {
      const n = Math.min(block, left);
      this.fillInput(n);
      this.runChains(n);
      left -= n;
    }
    const t = this.matchTarget(this.meterCur, NaN);
    if (!Number.isNaN(t)) {
      this.matchCurDb = t;
      if (this.meterCur.steps * this.meterCur.gridMs >= 1000) this.matchSeen = true;
    }
    this.matchCmpDb = this.matchTarget(this.meterCmp, this.matchCmpDb);
  }

  private fillInput(frames: number): void {
    const n = this.regionEnd - this.regionStart, period = n + this.latency, nch = this.channels;
    const base = this.regionStart - this.audioStartFrame;
    let s = this.inS;
    for (let i = 0; i < frames; i++) {
      if (s < n) for (let c = 0; c < nch; c++) this.input[c][i] = this.audio[c][base + s];
      else for (let c = 0; c < nch; c++) this.input[c][i] = 0;
      if (++s >= period) s = 0;
    }
    this.inS = s;
  }

  /** Input → both chains (and the dry path), aligned; meters of the input and of each chain. */
  private runChains(frames: number): void {
    const nch = this.channels;
    const inView = frames === this.maxBlockFrames ? this.input : this.input.map((x) => x.subarray(0, frames));
    this.meterIn.process(inView, frames);
    for (let c = 0; c < nch; c++) {
      this.work[c].set(inView[c]);
      this.dryWork[c].set(inView[c]);
      if (this.compare) this.cmpWork[c].set(inView[c]);
    }
    this.current.process(this.work, frames);
    this.curPad.process(this.work, frames);
    this.dryPad.process(this.dryWork, frames);
    this.meterCur.process(this.work, frames);
    if (this.compare) {
      this.compare.process(this.cmpWork, frames);
      this.cmpPad.process(this.cmpWork, frames);
      this.meterCmp.process(this.cmpWork, frames);
    }
  }

  private matchTarget(meter: LoudnessMeter, fallback: number): number {
    const inS = this.meterIn.shortTermLufs, outS = meter.shortTermLufs;
    return inS > MATCH_FLOOR_LUFS && outS > MATCH_FLOOR_LUFS ? inS - outS : fallback;
  }

  /**
   * One block: `out` gets what is heard (float32, clamped; a mono source on
   * every output channel). Returns true when a meter snapshot was written.
   */
  process(out: Float32Array[], frames: number): boolean {
    const nOut = out.length;
    if (!this.playing) {
      for (let c = 0; c < nOut; c++) out[c].fill(0, 0, frames);
      return this.tick(frames);
    }
    this.fillInput(frames);
    this.runChains(frames);
    const nch = this.channels;

    // Match: both offsets move all the time (one-pole in dB), so every switch is matched at once.
    const a = Math.exp(-frames / (MATCH_TIME_CONSTANT_S * this.sampleRate));
    const curTarget = this.matchTarget(this.meterCur, NaN);
    if (!Number.isNaN(curTarget)) {
      // The first measurable offset is taken as it is (nothing to smooth from yet), then it moves slowly.
      // Over the first second the output's window still lags the input's by the chain latency: follow at once.
      this.matchCurDb = this.matchSeen ? a * this.matchCurDb + (1 - a) * curTarget : curTarget;
      if (this.meterCur.steps * this.meterCur.gridMs >= 1000) this.matchSeen = true;
    }
    if (this.compare) {
      const cmpRef = this.match ? this.matchTarget(this.meterCmp, this.matchCmpDb) : this.meterCur.shortTermLufs - this.meterCmp.shortTermLufs;
      this.matchCmpDb = a * this.matchCmpDb + (1 - a) * (Number.isFinite(cmpRef) ? cmpRef : this.matchCmpDb);
    }
    const gCur = this.match ? 10 ** (this.matchCurDb / 20) : 1;
    const gCmp = this.compare ? 10 ** (this.matchCmpDb / 20) : 1;
    const g0Cur = this.gainCur, g0Cmp = this.gainCmp;

    // Heard, before Match: the selected chain or the dry input, crossfaded on a switch. Metered here.
    const heard = this.work;
    let lf = this.listenFade, bf = this.bypassFade;
    const lStep = (this.listenCompare ? 1 : -1) / FADE_FRAMES, bStep = (this.bypassAll ? 1 : -1) / FADE_FRAMES;
    const cmp = this.compare ? this.cmpWork : this.work;
    for (let i = 0; i < frames; i++) {
      lf = Math.min(1, Math.max(0, lf + lStep));
      bf = Math.min(1, Math.max(0, bf + bStep));
      const t = (i + 1) / frames;
      const gc = g0Cur + (gCur - g0Cur) * t, gk = g0Cmp + (gCmp - g0Cmp) * t;
      for (let c = 0; c < nch; c++) {
        const wet = this.work[c][i] * gc * (1 - lf) + cmp[c][i] * gk * lf;
        const dry = this.dryWork[c][i];
        // Unmatched copies for the meters.
        this.cmpWork[c][i] = this.work[c][i] * (1 - lf) + cmp[c][i] * lf;
        heard[c][i] = wet * (1 - bf) + dry * bf;
      }
    }
    this.listenFade = lf;
    this.bypassFade = bf;
    this.gainCur = gCur;
    this.gainCmp = gCmp;
    // What is heard before Match is metered: the selected chain, or the input under Bypass all.
    // Loudness comes from that source's own meter (heardMeter); true peak and overs here. Frames at
    // or under both the maximum so far and the overs threshold need not be exact (they can change
    // neither), which lets the detector skip quiet stretches as the limiter's does.
    const metered = this.bypassAll ? this.dryWork : this.cmpWork;
    this.truePeak.processPerFrame(metered, frames, this.peaks, Math.min(this.truePeakMax, this.oversAbove));
    const above = this.oversAbove, cc = this.corrCoeff;
    let ll = this.sumLL, rr = this.sumRR, lr = this.sumLR, over = this.overState;
    const mL = metered[0], mR = metered[nch > 1 ? 1 : 0];
    for (let i = 0; i < frames; i++) {
      const p = this.peaks[i];
      if (p > this.truePeakMax) this.truePeakMax = p;
      const isOver = p > above;
      if (isOver && !over) this.overs++;
      over = isOver;
      const l = mL[i], r = mR[i];
      ll = cc * ll + l * l;
      rr = cc * rr + r * r;
      lr = cc * lr + l * r;
    }
    this.sumLL = ll;
    this.sumRR = rr;
    this.sumLR = lr;
    this.overState = over;

    // Out: safety clamp, float32.
    for (let c = 0; c < nOut; c++) {
      const src = heard[c < nch ? c : 0], o = out[c];
      for (let i = 0; i < frames; i++) {
        const v = src[i];
        o[i] = v > 1 ? 1 : v < -1 ? -1 : v === v ? v : 0;
      }
    }
    this.updateGr();
    this.framesTo100Ms -= frames;
    if (this.framesTo100Ms <= 0) {
      this.framesTo100Ms += Math.round(this.sampleRate / 10);
      const heard = this.heardMeter;
      const lufs = heard.momentaryLufs;
      // Only whole 400 ms blocks (a meter younger than that pads its window with silence).
      if (heard.steps * heard.gridMs >= 400 && this.gatingCount < MAX_GATING_BLOCKS && lufs > -70) this.gating[this.gatingCount++] = 10 ** ((lufs - LOUDNESS_OFFSET_DB) / 10);
    }
    return this.tick(frames);
  }

  private updateGr(): void {
    this.current.takeGainReductionDb(this.grArrays);
    let k = 0;
    const all = this.bypassAll;
    for (const g of this.grArrays) {
      for (let t = 0; t < g.length && k < MAX_TRACES; t++, k++) {
        const v = all ? 0 : g[t];
        if (v > this.grNow[k]) this.grNow[k] = v;
      }
    }
  }

  /** Counts frames to the next meter snapshot; writes it when due. */
  private tick(frames: number): boolean {
    this.framesToPublish -= frames;
    if (this.framesToPublish > 0) return false;
    this.framesToPublish += this.publishFrames;
    this.publish();
    return true;
  }

  /** The meter of what is heard (before Match): the input under Bypass all, else the chain listened to. */
  private get heardMeter(): LoudnessMeter {
    return this.bypassAll ? this.meterIn : this.listenCompare && this.compare ? this.meterCmp : this.meterCur;
  }

  private integrated(): number {
    // BS.1770-4: absolute gate −70 LUFS, relative gate −10 LU, on 400 ms blocks every 100 ms
    // (the momentary loudness of what was heard at each 100 ms step since play).
    const n = this.gatingCount;
    if (n === 0) return -Infinity;
    let sum = 0;
    for (let i = 0; i < n; i++) sum += this.gating[i];
    const gate = (sum / n) * 0.1;
    let s2 = 0, n2 = 0;
    for (let i = 0; i < n; i++) {
      const p = this.gating[i];
      if (p > gate) {
        s2 += p;
        n2++;
      }
    }
    return n2 ? LOUDNESS_OFFSET_DB + 10 * Math.log10(s2 / n2) : -Infinity;
  }

  private publish(): void {
    const m = this.meters;
    m[M.seq] = ++this.seq * 2 - 1;
    m[M.playing] = this.playing ? 1 : 0;
    m[M.positionS] = this.positionS;
    m[M.momentaryLufs] = this.heardMeter.momentaryLufs;
    m[M.shortTermLufs] = this.heardMeter.shortTermLufs;
    this.integratedLufs = this.integrated();
    m[M.integratedLufs] = this.integratedLufs;
    m[M.truePeakDbtp] = 20 * Math.log10(this.truePeakMax);
    m[M.oversCount] = this.overs;
    const d = Math.sqrt(this.sumLL * this.sumRR);
    m[M.correlation] = d > 1e-20 ? Math.max(-1, Math.min(1, this.sumLR / d)) : 0;
    m[M.inputMomentaryLufs] = this.meterIn.momentaryLufs;
    m[M.matchOffsetDb] = this.bypassAll ? 0 : this.listenCompare && this.compare ? this.matchCmpDb : this.match ? this.matchCurDb : 0;
    m[M.droppedBlocks] = this.droppedBlocks;
    m[M.lateBlocks] = this.lateBlocks;
    m[M.limiterGrDb] = this.limiterTrace >= 0 ? this.grNow[this.limiterTrace] : NaN;
    m[M.listeningCompare] = this.listenCompare ? 1 : 0;
    m[M.bypassAll] = this.bypassAll ? 1 : 0;
    const holdS = GR_PEAK_HOLD_S, dt = 1 / METER_RATE_HZ;
    for (let k = 0; k < this.traceCount; k++) {
      const v = this.grNow[k];
      this.grPeakAge[k] += dt;
      if (v >= this.grPeak[k] || this.grPeakAge[k] > holdS) {
        this.grPeak[k] = v;
        this.grPeakAge[k] = 0;
      }
      m[M.traces + 2 * k] = v;
      m[M.traces + 2 * k + 1] = this.grPeak[k];
      this.grNow[k] = 0;
    }
    m[M.seq] = this.seq * 2;
  }

  // Controls (called when a message arrives; may allocate).

  setPlaying(on: boolean): void {
    if (on && !this.playing) {
      // "Since play": integrated loudness, true peak and overs start again.
      this.gatingCount = 0;
      this.framesTo100Ms = Math.round(this.sampleRate / 10);
      this.truePeakMax = 0;
      this.overs = 0;
    }
    this.playing = on;
  }

  seek(songFrame: number): void {
    const f = Math.min(this.regionEnd - 1, Math.max(this.regionStart, Math.round(songFrame)));
    this.inS = f - this.regionStart;
  }

  setRegion(startFrame: number, endFrame: number): void {
    this.regionStart = startFrame;
    this.regionEnd = endFrame;
    this.checkRegion();
    this.inS = 0;
  }

  setChain(chain: Chain): void {
    const before = this.current.latencyFrames, stagesBefore = JSON.stringify(this.current.stages);
    this.current.setChain(chain);
    if (this.current.latencyFrames !== before || JSON.stringify(this.current.stages) !== stagesBefore) this.alignLatency();
    else this.layoutCache = null;
  }

  setPush(stageIndex: number, on: boolean): void {
    this.current.setPush(stageIndex, on);
  }

  setBypassAll(on: boolean): void {
    this.bypassAll = on;
  }

  setMatch(on: boolean): void {
    this.match = on;
  }

  setCompareChain(chain: Chain | null): void {
    if (!chain) {
      this.compare = null;
      this.listenCompare = false;
      this.listenFade = 0;
    } else {
      this.compare = new LiveChain(chain, this.sampleRate, this.channels, this.maxBlockFrames);
      // Its state starts from the current chain's input history only from now on: give it the latest pre-roll it can have cheaply.
      this.matchCmpDb = this.matchCurDb;
    }
    this.alignLatency();
  }

  listenTo(which: "current" | "compare"): void {
    this.listenCompare = which === "compare" && this.compare !== null;
  }

  get isPlaying(): boolean {
    return this.playing;
  }
}

/** For tests: a planar Float64 copy of the first `frames` frames. */
export function copyPlanar(x: Planar, frames: number): Float64Array[] {
  return x.map((c) => c.slice(0, frames));
}
