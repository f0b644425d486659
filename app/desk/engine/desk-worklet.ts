// The listening desk's AudioWorkletProcessor: a thin shell around DeskCore
// (dsp/live/desk-core.ts). Bundled by Vite as a worker chunk
// (desk-engine.ts imports it with `?worker&url`), loaded with
// audioWorklet.addModule. It also counts blocks that came late:
//   lateBlocks: process() took longer than the block lasts;
//   droppedBlocks: the audio clock fell behind the wall clock by more than
//   the output's jitter allowance (blocks the device had to play without).
// Meters: into the SharedArrayBuffer when the page gave one, else a copy
// posted 30 times a second (never per block).

import { DeskCore } from "../../../dsp/live/desk-core.ts";
import { DESK_PROCESSOR, parseToWorklet, type FromWorklet } from "./protocol.ts";

declare const sampleRate: number;
declare const currentFrame: number;
declare class AudioWorkletProcessor {
  readonly port: MessagePort;
  constructor(options?: unknown);
}
declare function registerProcessor(name: string, ctor: new (options: { processorOptions?: { meterBuffer?: SharedArrayBuffer } }) => AudioWorkletProcessor): void;

/** Wall-clock lead over the audio clock tolerated before blocks count as dropped (output buffering bursts). */
const JITTER_ALLOWANCE_S = 0.04;

const now = (): number => (typeof performance !== "undefined" && performance.now ? performance.now() : Date.now()) / 1000;

class DeskProcessor extends AudioWorkletProcessor {
  private core: DeskCore | null = null;
  private readonly meterBuffer: Float64Array | null;
  private baseWall = -1;
  private baseFrame = 0;
  private minLead = Infinity;
  private lastCall = 0;

  constructor(options: { processorOptions?: { meterBuffer?: SharedArrayBuffer } }) {
    super(options);
    const sab = options.processorOptions?.meterBuffer;
    this.meterBuffer = sab ? new Float64Array(sab) : null;
    this.port.onmessage = (e: MessageEvent) => this.onMessage(e.data);
  }

  private send(m: FromWorklet): void {
    this.port.postMessage(m);
  }

  private onMessage(data: unknown): void {
    const parsed = parseToWorklet(data);
    if (!parsed.ok) {
      this.send({ type: "error", message: parsed.error });
      return;
    }
    const m = parsed.message;
    try {
      if (m.type === "load") {
        const core = new DeskCore({
          sampleRate,
          channels: m.channels,
          audio: m.audio,
          audioStartFrame: m.audioStartFrame,
          regionStartFrame: m.regionStartFrame,
          regionEndFrame: Math.min(m.regionEndFrame, m.audioStartFrame + m.audio[0].length),
          chain: m.chain,
          ...(this.meterBuffer ? { meters: this.meterBuffer } : {}),
        });
        core.setMatch(m.match);
        core.warm();
        if (this.core) {
          core.droppedBlocks = this.core.droppedBlocks;
          core.lateBlocks = this.core.lateBlocks;
        }
        core.setPlaying(m.playing);
        this.core = core;
        this.baseWall = -1; // the warm-up blocked this thread on purpose: start timing afresh
        this.send({ type: "ready", layout: core.layout, sampleRate });
        return;
      }
      const core = this.core;
      if (!core) throw new Error(`"${m.type}" before "load"`);
      switch (m.type) {
        case "play":
          core.setPlaying(true);
          this.baseWall = -1;
          break;
        case "pause":
          core.setPlaying(false);
          break;
        case "seek":
          core.seek(m.songFrame);
          break;
        case "chain": {
          const before = core.layout;
          core.setChain(m.chain);
          if (core.layout !== before) this.send({ type: "layout", layout: core.layout });
          break;
        }
        case "push":
          core.setPush(m.stageIndex, m.on);
          break;
        case "bypassAll":
          core.setBypassAll(m.on);
          break;
        case "match":
          core.setMatch(m.on);
          break;
        case "compare":
          core.setCompareChain(m.chain);
          this.send({ type: "layout", layout: core.layout });
          break;
        case "listen":
          core.listenTo(m.which);
          break;
      }
    } catch (err) {
      this.send({ type: "error", message: err instanceof Error ? err.message : String(err) });
    }
  }

  process(_inputs: Float32Array[][], outputs: Float32Array[][]): boolean {
    const out = outputs[0];
    const core = this.core;
    if (!core || out.length === 0) {
      for (const o of out) o.fill(0);
      return true;
    }
    const frames = out[0].length;
    const t0 = now();
    if (core.isPlaying) this.countDropped(core, t0, frames);
    const published = core.process(out, frames);
    if (core.isPlaying && now() - t0 > frames / sampleRate) core.lateBlocks++;
    if (published && !this.meterBuffer) this.send({ type: "meters", data: core.meters });
    return true;
  }

  private countDropped(core: DeskCore, wall: number, frames: number): void {
    if (this.baseWall < 0 || wall - this.lastCall > 0.5) {
      this.baseWall = wall;
      this.baseFrame = currentFrame;
      this.minLead = Infinity;
    }
    this.lastCall = wall;
    const lead = wall - this.baseWall - (currentFrame - this.baseFrame) / sampleRate;
    if (lead < this.minLead) this.minLead = lead;
    const behind = lead - this.minLead - JITTER_ALLOWANCE_S;
    if (behind > 0) {
      const blocks = Math.floor(behind / (frames / sampleRate));
      if (blocks > 0) {
        core.droppedBlocks += blocks;
        // Count each lost stretch once: the audio clock restarts from here.
        this.baseWall = wall;
        this.baseFrame = currentFrame;
        this.minLead = Infinity;
      }
    }
  }
}

registerProcessor(DESK_PROCESSOR, DeskProcessor);
