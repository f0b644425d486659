// DeskEngine: the page's handle on the listening desk (browser only: import
// it lazily, in an effect). It fetches the mix over the region and its
// pre-roll by byte ranges (the compare player's loader,
// app/components/player/progressive-wav.ts), decodes the samples itself
// with the renderer's scaling (pcm.ts), opens an AudioContext at the file's
// own sample rate (nothing is resampled on the way) and runs the chain in
// an AudioWorklet (desk-worklet.ts → dsp/live/desk-core.ts). Meters arrive
// ~30 times a second through a SharedArrayBuffer when the page is
// cross-origin isolated, else by message.

import type { Chain } from "../../../dsp/chain/schema.ts";
import type { DeskLayout } from "../../../dsp/live/desk-core.ts";
import { M, METER_LENGTH, METER_RATE_HZ } from "../../../dsp/live/meter-layout.ts";
import { prerollStartFrame } from "../../../dsp/render/preroll.ts";
import { fetchFrames, probe, type Io } from "../../components/player/progressive-wav.ts";
import workletUrl from "./desk-worklet.ts?worker&url";
import { decodePcmInto } from "./pcm.ts";
import { DESK_PROCESSOR, type FromWorklet, type ToWorklet } from "./protocol.ts";

export { PUSH_DESCRIPTIONS } from "../../../dsp/live/push.ts";

export type DeskRegion = { startS: number; endS: number };
export type DeskSource = { url: string };

export interface DeskStageMeter {
  index: number;
  type: string;
  traceNames: string[];
  grDb: number[];
  grPeakDb: number[];
}
export interface DeskMeters {
  playing: boolean;
  positionS: number;
  stages: DeskStageMeter[];
  momentaryLufs: number;
  shortTermLufs: number;
  integratedLufs: number;
  truePeakDbtp: number;
  oversCount: number;
  correlation: number;
  inputMomentaryLufs: number;
  matchOffsetDb: number;
  droppedBlocks: number;
  /** Blocks whose processing took longer than the block lasts (counted in the worklet). */
  lateBlocks: number;
  limiterHistoryDb?: number[];
}

/** The longest region the desk plays (s). */
export const MAX_REGION_S = 120;
/** Bytes per ranged request while loading, so progress can be reported. */
const FETCH_PIECE_BYTES = 4 * 1024 * 1024;
/** Limiter history kept for the curve: 6 s of snapshots. */
const LIMITER_HISTORY = 6 * METER_RATE_HZ;

type Loaded = { sampleRate: number; channels: number; audio: Float32Array<ArrayBuffer>[]; audioStartFrame: number; regionStartFrame: number; regionEndFrame: number };

export async function loadDeskAudio(source: DeskSource, region: DeskRegion, onProgress?: (f: number) => void): Promise<Loaded> {
  if (!(region.endS > region.startS && region.startS >= 0)) throw new Error(`region ${region.startS}–${region.endS} s must have 0 ≤ start < end`);
  if (region.endS - region.startS > MAX_REGION_S + 1e-9) throw new Error(`the desk plays at most ${MAX_REGION_S} s; the region is ${(region.endS - region.startS).toFixed(1)} s`);
  const io: Io = { fetch: (u, init) => fetch(u, init), decode: () => Promise.reject(new Error("not used")) };
  const p = await probe(source.url, io);
  const { sampleRate, channels, frames } = p.layout;
  const regionStartFrame = Math.min(frames - 1, Math.round(region.startS * sampleRate));
  const regionEndFrame = Math.min(frames, Math.round(region.endS * sampleRate));
  if (!(regionEndFrame > regionStartFrame)) throw new Error("the region lies after the end of the mix");
  const audioStartFrame = prerollStartFrame(regionStartFrame, sampleRate);
  const total = regionEndFrame - audioStartFrame;
  const audio = Array.from({ length: channels }, () => new Float32Array(total));
  const piece = Math.max(1, Math.floor(FETCH_PIECE_BYTES / p.layout.blockAlign));
  let done = 0;
  onProgress?.(0);
  while (done < total) {
    const n = Math.min(piece, total - done);
    const bytes = await fetchFrames(p, audioStartFrame + done, audioStartFrame + done + n, io);
    const got = decodePcmInto(p.layout, bytes, audio, done);
    if (got < n) throw new Error("the audio ended early");
    done += n;
    onProgress?.(done / total);
  }
  return { sampleRate, channels, audio, audioStartFrame, regionStartFrame, regionEndFrame };
}

export class DeskEngine {
  readonly sampleRate: number;
  private readonly context: AudioContext;
  private readonly node: AudioWorkletNode;
  private readonly shared: Float64Array | null;
  private readonly snapshot = new Float64Array(METER_LENGTH);
  private layout: DeskLayout;
  private listeners = new Set<(m: DeskMeters) => void>();
  private poll: ReturnType<typeof setInterval> | null = null;
  private lastSeq = -1;
  private limiterHistory: number[] = [];
  private chain: Chain;
  private playing = false;
  private errorListeners = new Set<(message: string) => void>();
  private pendingReady: { resolve: () => void; reject: (e: Error) => void } | null = null;
  private closed = false;
  private readonly pushed = new Map<number, boolean>();
  private bypassAll = false;
  private match = true;
  private compare: Chain | null = null;
  private listening: "current" | "compare" = "current";

  private constructor(private readonly source: DeskSource, context: AudioContext, node: AudioWorkletNode, shared: Float64Array | null, layout: DeskLayout, chain: Chain) {
    this.context = context;
    this.node = node;
    this.shared = shared;
    this.layout = layout;
    this.chain = chain;
    this.sampleRate = context.sampleRate;
    node.port.onmessage = (e: MessageEvent<FromWorklet>) => this.onMessage(e.data);
    if (shared) this.poll = setInterval(() => this.readShared(), 1000 / METER_RATE_HZ);
  }

  /** Fetches the mix over the region plus its pre-roll, decodes it at its own rate, builds the worklet. */
  static async open(source: DeskSource, region: DeskRegion, chain: Chain, options: { onProgress?: (fraction: number) => void } = {}): Promise<DeskEngine> {
    const loaded = await loadDeskAudio(source, region, options.onProgress);
    const context = new AudioContext({ sampleRate: loaded.sampleRate, latencyHint: "playback" });
    try {
      if (context.sampleRate !== loaded.sampleRate) throw new Error(`this browser cannot play ${loaded.sampleRate} Hz audio without resampling`);
      await context.audioWorklet.addModule(workletUrl);
      const shared = typeof SharedArrayBuffer !== "undefined" && globalThis.crossOriginIsolated ? new Float64Array(new SharedArrayBuffer(METER_LENGTH * 8)) : null;
      const node = new AudioWorkletNode(context, DESK_PROCESSOR, {
        numberOfInputs: 0,
        numberOfOutputs: 1,
        outputChannelCount: [2],
        processorOptions: shared ? { meterBuffer: shared.buffer } : {},
      });
      node.connect(context.destination);
      const layout = await sendLoad(node, loaded, chain, false);
      return new DeskEngine(source, context, node, shared, layout, chain);
    } catch (err) {
      await context.close().catch(() => {});
      throw err;
    }
  }

  private post(m: ToWorklet): void {
    if (this.closed) return;
    this.node.port.postMessage(m);
  }

  private onMessage(m: FromWorklet): void {
    if (m.type === "meters") this.deliver(m.data);
    else if (m.type === "layout") this.layout = m.layout;
    else if (m.type === "ready") {
      this.layout = m.layout;
      this.pendingReady?.resolve();
      this.pendingReady = null;
    } else if (m.type === "error") {
      if (this.pendingReady) {
        this.pendingReady.reject(new Error(m.message));
        this.pendingReady = null;
      }
      for (const l of this.errorListeners) l(m.message);
    }
  }

  private readShared(): void {
    const s = this.shared!;
    for (let attempt = 0; attempt < 3; attempt++) {
      const seq = s[M.seq];
      if (seq % 2 === 1 || seq === this.lastSeq) return;
      this.snapshot.set(s);
      if (s[M.seq] === seq) {
        this.lastSeq = seq;
        this.deliver(this.snapshot);
        return;
      }
    }
  }

  private deliver(d: Float64Array): void {
    const meters = this.toMeters(d);
    for (const l of this.listeners) l(meters);
  }

  private toMeters(d: Float64Array): DeskMeters {
    let k = 0;
    const stages: DeskStageMeter[] = this.layout.stages.map((s) => {
      const names = [...s.traceNames];
      const grDb = names.map((_, t) => d[M.traces + 2 * (k + t)]);
      const grPeakDb = names.map((_, t) => d[M.traces + 2 * (k + t) + 1]);
      k += names.length;
      return { index: s.index, type: s.type, traceNames: names, grDb, grPeakDb };
    });
    const lim = d[M.limiterGrDb];
    if (!Number.isNaN(lim)) {
      this.limiterHistory.push(lim);
      if (this.limiterHistory.length > LIMITER_HISTORY) this.limiterHistory.shift();
    }
    return {
      playing: d[M.playing] === 1,
      positionS: d[M.positionS],
      stages,
      momentaryLufs: d[M.momentaryLufs],
      shortTermLufs: d[M.shortTermLufs],
      integratedLufs: d[M.integratedLufs],
      truePeakDbtp: d[M.truePeakDbtp],
      oversCount: d[M.oversCount],
      correlation: d[M.correlation],
      inputMomentaryLufs: d[M.inputMomentaryLufs],
      matchOffsetDb: d[M.matchOffsetDb],
      droppedBlocks: d[M.droppedBlocks],
      lateBlocks: d[M.lateBlocks],
      ...(Number.isNaN(lim) ? {} : { limiterHistoryDb: this.limiterHistory.slice() }),
    };
  }

  /** Resumes the AudioContext (the page has already shown the safe-level confirmation). */
  async play(): Promise<void> {
    this.post({ type: "play" });
    this.playing = true;
    await this.context.resume();
  }

  pause(): void {
    this.playing = false;
    this.post({ type: "pause" });
  }

  seek(songTimeS: number): void {
    this.post({ type: "seek", songFrame: Math.round(songTimeS * this.sampleRate) });
  }

  /** Loads another region (fetch, pre-roll); the chain, Match, Bypass all and the compare chain carry over where they can. */
  async setRegion(region: DeskRegion, options: { onProgress?: (fraction: number) => void } = {}): Promise<void> {
    const loaded = await loadDeskAudio(this.source, region, options.onProgress);
    if (this.closed) return;
    if (loaded.sampleRate !== this.sampleRate) throw new Error("the mix's sample rate changed; open the desk again");
    await new Promise<void>((resolve, reject) => {
      this.pendingReady = { resolve, reject };
      const m: ToWorklet = { type: "load", channels: loaded.channels, audio: loaded.audio, audioStartFrame: loaded.audioStartFrame, regionStartFrame: loaded.regionStartFrame, regionEndFrame: loaded.regionEndFrame, chain: this.chain, playing: this.playing, match: this.match };
      this.node.port.postMessage(m, loaded.audio.map((a) => a.buffer as ArrayBuffer));
    });
    // A new region starts a new stream: the switches carry over.
    for (const [i, on] of this.pushed) if (on) this.post({ type: "push", stageIndex: i, on });
    this.post({ type: "bypassAll", on: this.bypassAll });
    this.post({ type: "match", on: this.match });
    if (this.compare) this.post({ type: "compare", chain: this.compare });
    this.post({ type: "listen", which: this.listening });
  }

  setChain(chain: Chain): void {
    this.chain = chain;
    this.post({ type: "chain", chain });
  }

  setPush(stageIndex: number, on: boolean): void {
    this.pushed.set(stageIndex, on);
    this.post({ type: "push", stageIndex, on });
  }

  setBypassAll(on: boolean): void {
    this.bypassAll = on;
    this.post({ type: "bypassAll", on });
  }

  setMatch(on: boolean): void {
    this.match = on;
    this.post({ type: "match", on });
  }

  setCompareChain(chain: Chain | null): void {
    this.compare = chain;
    if (!chain) this.listening = "current";
    this.post({ type: "compare", chain });
  }

  listenTo(which: "current" | "compare"): void {
    this.listening = which;
    this.post({ type: "listen", which });
  }

  onMeters(listener: (m: DeskMeters) => void): () => void {
    this.listeners.add(listener);
    return () => this.listeners.delete(listener);
  }

  /** Errors the worklet reports (a message it refused, a chain that does not fit the file's rate). */
  onError(listener: (message: string) => void): () => void {
    this.errorListeners.add(listener);
    return () => this.errorListeners.delete(listener);
  }

  get isPlaying(): boolean {
    return this.playing;
  }

  async close(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    if (this.poll) clearInterval(this.poll);
    this.listeners.clear();
    this.node.disconnect();
    await this.context.close();
  }
}

function sendLoad(node: AudioWorkletNode, loaded: Loaded, chain: Chain, playing: boolean): Promise<DeskLayout> {
  return new Promise<DeskLayout>((resolve, reject) => {
    node.port.onmessage = (e: MessageEvent<FromWorklet>) => {
      if (e.data.type === "ready") resolve(e.data.layout);
      else if (e.data.type === "error") reject(new Error(e.data.message));
    };
    const m: ToWorklet = { type: "load", channels: loaded.channels, audio: loaded.audio, audioStartFrame: loaded.audioStartFrame, regionStartFrame: loaded.regionStartFrame, regionEndFrame: loaded.regionEndFrame, chain, playing };
    node.port.postMessage(m, loaded.audio.map((a) => a.buffer as ArrayBuffer));
  });
}
