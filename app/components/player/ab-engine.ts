// The A/B engine: two decoded sources on one AudioContext clock. Both are
// started together (one `when`) through their own gain nodes and keep
// running; switching only moves the gains, so the other source is heard at
// the same position at once. A short ramp (SWITCH_RAMP_S) avoids a click at
// the switch, common practice for gain changes on running audio.
//
// Times are seconds on the mix's time axis: a source's own 0 s sits at its
// offsetS (a preview starts at its region's start). Playback covers the span
// both sources share, so either can be heard anywhere on the bar.
//
// A source may start with only the first seconds of its audio decoded (see
// progressive-wav.ts): the span is then given from the files' headers, play
// and seeks stay within what both have decoded (`availableEndS`), and
// replaceBuffer swaps in the longer buffer later. A swap during playback is
// scheduled on the same clock: the old node stops and the new one starts at
// one `when`, at the position the clock reaches then, so nothing is heard
// but the same samples continuing.
//
// The Web Audio types are narrowed to what is used, so tests can drive the
// engine with a fake context in Node.
import { dbToLinear } from "../../../dsp/units.ts";

export type SourceId = "A" | "B";
export type Region = { startS: number; endS: number };

export interface ParamLike {
  value: number;
  setValueAtTime(value: number, time: number): unknown;
  linearRampToValueAtTime(value: number, time: number): unknown;
  cancelScheduledValues(time: number): unknown;
}
export interface GainLike {
  gain: ParamLike;
  connect(destination: unknown): unknown;
  disconnect(): void;
}
export interface BufferLike {
  duration: number;
  sampleRate: number;
  numberOfChannels: number;
  length: number;
  getChannelData(channel: number): Float32Array;
}
export interface SourceNodeLike {
  buffer: BufferLike | null;
  loop: boolean;
  loopStart: number;
  loopEnd: number;
  connect(destination: unknown): unknown;
  disconnect(): void;
  start(when: number, offset: number): void;
  stop(when?: number): void;
}
export interface ContextLike {
  readonly currentTime: number;
  readonly destination: unknown;
  readonly state: string;
  createGain(): GainLike;
  createBufferSource(): SourceNodeLike;
  resume(): Promise<void>;
}

export const SWITCH_RAMP_S = 0.008;
/** Scheduling both starts a little ahead lets them begin on the same sample. */
export const START_AHEAD_S = 0.03;
export const MIN_LOOP_S = 0.5;

export type EngineSource = { buffer: BufferLike; offsetS: number };

export class AbEngine {
  readonly span: Region;
  active: SourceId = "A";
  matching = true;
  loop: Region | null = null;
  playing = false;
  private readonly gains: Record<SourceId, GainLike>;
  private nodes: Partial<Record<SourceId, SourceNodeLike>> = {};
  private matchDb: Record<SourceId, number> = { A: 0, B: 0 };
  private anchor = { ctxTime: 0, positionS: 0 };
  private pausedAtS: number;

  private readonly sources: Record<SourceId, EngineSource>;

  /**
   * `span`: the shared stretch of the whole sources when the buffers hold only
   * their beginning (it comes from the files' headers); by default, where the
   * two buffers overlap.
   */
  constructor(
    private readonly ctx: ContextLike,
    sources: Record<SourceId, EngineSource>,
    span?: Region,
  ) {
    this.sources = { A: { ...sources.A }, B: { ...sources.B } };
    const startS = span?.startS ?? Math.max(sources.A.offsetS, sources.B.offsetS);
    const endS = span?.endS ?? Math.min(sources.A.offsetS + sources.A.buffer.duration, sources.B.offsetS + sources.B.buffer.duration);
    if (!(endS > startS)) throw new Error("the two sources do not overlap in time");
    this.span = { startS, endS };
    if (!(this.availableEndS() > startS)) throw new Error("the decoded audio does not reach into the shared span");
    this.pausedAtS = startS;
    this.gains = { A: ctx.createGain(), B: ctx.createGain() };
    for (const id of ["A", "B"] as const) {
      this.gains[id].connect(ctx.destination);
      this.gains[id].gain.value = this.targetGain(id);
    }
  }

  /** The gain applied to a source for level matching, dB (0 when matching is off). */
  gainDb(id: SourceId): number {
    return this.matching ? this.matchDb[id] : 0;
  }

  private targetGain(id: SourceId): number {
    return id === this.active ? dbToLinear(this.gainDb(id)) : 0;
  }

  private applyGains(): void {
    const now = this.ctx.currentTime;
    for (const id of ["A", "B"] as const) {
      const param = this.gains[id].gain;
      param.cancelScheduledValues(now);
      param.setValueAtTime(param.value, now);
      param.linearRampToValueAtTime(this.targetGain(id), now + SWITCH_RAMP_S);
    }
  }

  setActive(id: SourceId): void {
    if (id === this.active) return;
    this.active = id;
    this.applyGains();
  }

  toggle(): SourceId {
    this.setActive(this.active === "A" ? "B" : "A");
    return this.active;
  }

  setLevelMatch(gainADb: number, gainBDb: number): void {
    this.matchDb = { A: gainADb, B: gainBDb };
    this.applyGains();
  }

  setMatching(on: boolean): void {
    this.matching = on;
    this.applyGains();
  }

  /** How far both sources are decoded, on the mix's time axis (the span's end once both are whole). */
  availableEndS(): number {
    const end = (id: SourceId) => this.sources[id].offsetS + this.sources[id].buffer.duration;
    return Math.min(this.span.endS, end("A"), end("B"));
  }

  /** True while a source holds less than the span (its rest is still loading). */
  partial(): boolean {
    return this.availableEndS() < this.span.endS - 1e-3;
  }

  /** True once playback has run up to the end of what is decoded while more is still to come (the caller waits). */
  starved(): boolean {
    return this.playing && this.partial() && !this.loop && this.rawPositionAt(this.ctx.currentTime) >= this.availableEndS() - 0.01;
  }

  /**
   * A longer buffer for a source, starting at the same place (its rest has
   * arrived). During playback the old node hands over to the new one at one
   * scheduled time, on the clock both sources share.
   */
  replaceBuffer(id: SourceId, buffer: BufferLike): void {
    this.sources[id] = { ...this.sources[id], buffer };
    const old = this.nodes[id];
    if (!this.playing || !old) return;
    const when = this.ctx.currentTime + START_AHEAD_S;
    const node = this.createNode(id);
    node.start(when, this.positionAt(when) - this.sources[id].offsetS);
    old.stop(when);
    this.nodes[id] = node;
  }

  private rawPositionAt(ctxTime: number): number {
    return this.anchor.positionS + Math.max(0, ctxTime - this.anchor.ctxTime);
  }

  /** Where playback is (or will be) at a time of the context's clock, on the mix's time axis. */
  private positionAt(ctxTime: number): number {
    if (!this.playing) return this.pausedAtS;
    const raw = this.rawPositionAt(ctxTime);
    if (this.loop && raw >= this.loop.endS) {
      const length = this.loop.endS - this.loop.startS;
      return this.loop.startS + ((raw - this.loop.startS) % length);
    }
    return Math.min(raw, this.span.endS);
  }

  /** Where playback is now, on the mix's time axis. */
  positionS(): number {
    return this.positionAt(this.ctx.currentTime);
  }

  /** True once playback without a loop has run past the shared span (the caller then pauses). */
  reachedEnd(): boolean {
    return this.playing && !this.loop && this.anchor.positionS + (this.ctx.currentTime - this.anchor.ctxTime) >= this.span.endS;
  }

  private clampS(s: number): number {
    const { startS, endS } = this.loop ?? this.span;
    const end = Math.min(endS, this.availableEndS());
    if (!Number.isFinite(s)) return startS;
    return Math.min(Math.max(s, startS), end - 1e-3);
  }

  private createNode(id: SourceId): SourceNodeLike {
    const { buffer, offsetS } = this.sources[id];
    const node = this.ctx.createBufferSource();
    node.buffer = buffer;
    if (this.loop) {
      node.loop = true;
      node.loopStart = this.loop.startS - offsetS;
      node.loopEnd = this.loop.endS - offsetS;
    }
    node.connect(this.gains[id]);
    return node;
  }

  private startNodes(fromS: number): void {
    const when = this.ctx.currentTime + START_AHEAD_S;
    for (const id of ["A", "B"] as const) {
      const node = this.createNode(id);
      node.start(when, fromS - this.sources[id].offsetS);
      this.nodes[id] = node;
    }
    this.anchor = { ctxTime: when, positionS: fromS };
  }

  private stopNodes(): void {
    for (const node of Object.values(this.nodes)) {
      try {
        node.stop();
      } catch {
        // A node that already ended may refuse stop(); nothing to do.
      }
      node.disconnect();
    }
    this.nodes = {};
  }

  async play(): Promise<void> {
    if (this.playing) return;
    if (this.ctx.state !== "running") await this.ctx.resume();
    let from = this.clampS(this.pausedAtS);
    if (!this.loop && !this.partial() && from >= this.span.endS - 0.01) from = this.span.startS;
    this.startNodes(from);
    this.playing = true;
  }

  pause(): void {
    if (!this.playing) return;
    this.pausedAtS = this.positionS();
    this.stopNodes();
    this.playing = false;
  }

  seek(s: number): void {
    const to = this.clampS(s);
    if (this.playing) {
      this.stopNodes();
      this.startNodes(to);
    } else {
      this.pausedAtS = to;
    }
  }

  /** Loops over `region` (clamped to the shared span, and to what is decoded so far), or stops looping with null. */
  setLoop(region: Region | null): Region | null {
    const position = this.positionS();
    if (region) {
      const startS = Math.max(this.span.startS, Math.min(region.startS, region.endS));
      const endS = Math.min(this.availableEndS(), Math.max(region.startS, region.endS));
      this.loop = endS - startS >= MIN_LOOP_S ? { startS, endS } : null;
    } else {
      this.loop = null;
    }
    // Restarted so the sources pick up their new loop points; a position outside the loop jumps to its start.
    const inLoop = this.loop && position >= this.loop.startS && position < this.loop.endS;
    this.seek(this.loop && !inLoop ? this.loop.startS : position);
    return this.loop;
  }

  dispose(): void {
    this.stopNodes();
    this.playing = false;
    this.gains.A.disconnect();
    this.gains.B.disconnect();
  }
}
