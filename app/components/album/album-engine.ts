// Album playback on one AudioContext clock: each master is an
// AudioBufferSourceNode started at its album time (the gaps are the time
// between), so one track's end runs into the next one's start sample-exactly,
// with no fade and no click added. The context runs at the masters' sample
// rate, so nothing is resampled. Only the tracks within LOOKAHEAD_S of the
// position are fetched and decoded (an album decoded whole would hold
// gigabytes); the ones behind are let go.

export type AlbumItem = { url: string; startS: number; durationS: number };

const LOOKAHEAD_S = 25;
const START_LATENCY_S = 0.15;

export class AlbumEngine {
  private ctx: AudioContext | null = null;
  private readonly buffers = new Map<number, Promise<AudioBuffer>>();
  private readonly nodes = new Map<number, AudioBufferSourceNode>();
  private originCtxS = 0;
  private originAlbumS = 0;
  private pausedAtS = 0;
  private timer: ReturnType<typeof setInterval> | null = null;
  private generation = 0;
  playing = false;

  constructor(
    private readonly items: AlbumItem[],
    private readonly totalS: number,
    private readonly sampleRate: number | null,
    private readonly onTick: (timeS: number, playing: boolean) => void,
    private readonly onError: (message: string) => void,
  ) {}

  get timeS(): number {
    if (!this.playing || !this.ctx) return this.pausedAtS;
    return Math.min(this.totalS, this.originAlbumS + (this.ctx.currentTime - this.originCtxS));
  }

  private context(): AudioContext {
    if (!this.ctx) {
      try {
        this.ctx = this.sampleRate ? new AudioContext({ sampleRate: this.sampleRate }) : new AudioContext();
      } catch {
        this.ctx = new AudioContext(); // a rate the browser does not offer: it resamples
      }
    }
    return this.ctx;
  }

  private load(i: number): Promise<AudioBuffer> {
    let pending = this.buffers.get(i);
    if (!pending) {
      const ctx = this.context();
      pending = fetch(this.items[i].url, { credentials: "same-origin" })
        .then((r) => {
          if (!r.ok) throw new Error(`the master of track ${i + 1} could not be loaded (${r.status})`);
          return r.arrayBuffer();
        })
        .then((bytes) => ctx.decodeAudioData(bytes));
      pending.catch(() => this.buffers.delete(i));
      this.buffers.set(i, pending);
    }
    return pending;
  }

  async play(fromS = this.pausedAtS): Promise<void> {
    this.stopNodes();
    const generation = ++this.generation;
    const ctx = this.context();
    await ctx.resume();
    const startS = fromS >= this.totalS - 0.05 ? 0 : Math.max(0, fromS);
    const first = this.items.findIndex((it) => it.startS + it.durationS > startS);
    try {
      if (first >= 0) await this.load(first);
    } catch (error) {
      this.onError((error as Error).message);
      return;
    }
    if (generation !== this.generation) return; // paused or moved meanwhile
    this.originAlbumS = startS;
    this.originCtxS = ctx.currentTime + START_LATENCY_S;
    this.playing = true;
    this.schedule(generation);
    if (this.timer) clearInterval(this.timer);
    this.timer = setInterval(() => this.tick(generation), 100);
    this.onTick(this.timeS, true);
  }

  pause(): void {
    this.pausedAtS = this.timeS;
    this.generation++;
    this.stopNodes();
    this.playing = false;
    if (this.timer) clearInterval(this.timer);
    this.timer = null;
    this.onTick(this.pausedAtS, false);
  }

  seek(timeS: number): void {
    const t = Math.max(0, Math.min(this.totalS, timeS));
    if (this.playing) void this.play(t);
    else {
      this.pausedAtS = t;
      this.onTick(t, false);
    }
  }

  close(): void {
    this.pause();
    void this.ctx?.close();
    this.ctx = null;
  }

  private tick(generation: number): void {
    if (generation !== this.generation) return;
    const t = this.timeS;
    if (t >= this.totalS) {
      this.pausedAtS = 0;
      this.generation++;
      this.stopNodes();
      this.playing = false;
      if (this.timer) clearInterval(this.timer);
      this.onTick(this.totalS, false);
      return;
    }
    this.schedule(generation);
    this.onTick(t, true);
  }

  private schedule(generation: number): void {
    const ctx = this.ctx!;
    const now = this.timeS;
    this.items.forEach((item, i) => {
      const endS = item.startS + item.durationS;
      if (endS <= now) {
        // Played (or skipped): let it go.
        this.nodes.delete(i);
        this.buffers.delete(i);
        return;
      }
      if (item.startS > now + LOOKAHEAD_S || this.nodes.has(i)) return;
      void this.load(i).then(
        (buffer) => {
          if (generation !== this.generation || this.nodes.has(i)) return;
          let when = this.originCtxS + (item.startS - this.originAlbumS);
          let offset = Math.max(0, this.originAlbumS - item.startS);
          if (when < ctx.currentTime) {
            // Decoded late (a slow connection): join where the clock is.
            offset += ctx.currentTime - when;
            when = ctx.currentTime;
          }
          if (offset >= buffer.duration) return;
          const node = ctx.createBufferSource();
          node.buffer = buffer;
          node.connect(ctx.destination);
          node.start(Math.max(when, ctx.currentTime), offset);
          this.nodes.set(i, node);
        },
        (error: Error) => this.onError(error.message),
      );
    });
  }

  private stopNodes(): void {
    for (const node of this.nodes.values()) {
      try {
        node.stop();
      } catch {
        // never started
      }
      node.disconnect();
    }
    this.nodes.clear();
  }
}
