// The A/B engine on a fake AudioContext that records what it is asked to do:
// one clock, both sources started together, switching by gains only, loops
// placed by each source's offset, and the player's level matching measured
// on decoded audio.
import { describe, expect, it } from "vitest";
import { AbEngine, SWITCH_RAMP_S, type BufferLike, type ContextLike, type GainLike, type SourceNodeLike } from "../../app/components/player/ab-engine.ts";
import { playerLevelMatch } from "../../app/components/player/match.ts";
import { computePeaks } from "../../app/components/player/peaks.ts";
import { formatClock, formatDb } from "../../app/lib/format.ts";

class FakeParam {
  value = 1;
  events: [string, number, number][] = [];
  setValueAtTime(v: number, t: number) {
    this.events.push(["set", v, t]);
    this.value = v;
  }
  linearRampToValueAtTime(v: number, t: number) {
    this.events.push(["ramp", v, t]);
    this.value = v; // The fake jumps to the target; the ramp's end time is checked separately.
  }
  cancelScheduledValues(t: number) {
    this.events.push(["cancel", 0, t]);
  }
}

class FakeContext implements ContextLike {
  currentTime = 10;
  destination = { name: "out" };
  state = "suspended";
  gains: (GainLike & { gain: FakeParam })[] = [];
  started: { buffer: BufferLike | null; when: number; offset: number; loop: boolean; loopStart: number; loopEnd: number; stopped: boolean; stopAt?: number }[] = [];
  createGain() {
    const g = { gain: new FakeParam(), connect: () => undefined, disconnect: () => undefined };
    this.gains.push(g);
    return g;
  }
  createBufferSource(): SourceNodeLike {
    const ctx = this;
    const node = {
      buffer: null as BufferLike | null,
      loop: false,
      loopStart: 0,
      loopEnd: 0,
      connect: () => undefined,
      disconnect: () => undefined,
      start(when: number, offset: number) {
        ctx.started.push({ buffer: node.buffer, when, offset, loop: node.loop, loopStart: node.loopStart, loopEnd: node.loopEnd, stopped: false });
        record = ctx.started[ctx.started.length - 1];
      },
      stop(when?: number) {
        if (record) {
          record.stopped = true;
          record.stopAt = when;
        }
      },
    };
    let record: FakeContext["started"][number] | undefined;
    return node;
  }
  async resume() {
    this.state = "running";
  }
}

const SR = 8000;
/** A stereo 1 kHz-ish buffer of `seconds` at `dbfs`. */
function buffer(seconds: number, dbfs: number): BufferLike {
  const amp = Math.pow(10, dbfs / 20);
  const data = new Float32Array(Math.round(seconds * SR));
  for (let i = 0; i < data.length; i++) data[i] = amp * Math.sin((2 * Math.PI * 1000 * i) / SR);
  return { duration: data.length / SR, sampleRate: SR, numberOfChannels: 2, length: data.length, getChannelData: () => data };
}

describe("AbEngine", () => {
  const print = buffer(40, -20);
  const preview = buffer(10, -14); // a preview of 20 s … 30 s

  it("plays the span both sources share, both started at the same instant at the same mix position", async () => {
    const ctx = new FakeContext();
    const engine = new AbEngine(ctx, { A: { buffer: preview, offsetS: 20 }, B: { buffer: print, offsetS: 0 } });
    expect(engine.span).toEqual({ startS: 20, endS: 30 });
    engine.seek(24);
    await engine.play();
    expect(ctx.state).toBe("running");
    expect(ctx.started).toHaveLength(2);
    const [a, b] = ctx.started;
    expect(a.when).toBe(b.when);
    // Same mix time (24 s): 4 s into the preview, 24 s into the print.
    expect(a.offset).toBeCloseTo(4, 9);
    expect(b.offset).toBeCloseTo(24, 9);
    ctx.currentTime = a.when + 1.5;
    expect(engine.positionS()).toBeCloseTo(25.5, 9);
  });

  it("switches by moving the gains only: no source is restarted, the position does not move", async () => {
    const ctx = new FakeContext();
    const engine = new AbEngine(ctx, { A: { buffer: print, offsetS: 0 }, B: { buffer: buffer(40, -26), offsetS: 0 } });
    const [gainA, gainB] = ctx.gains;
    expect([gainA.gain.value, gainB.gain.value]).toEqual([1, 0]);
    await engine.play();
    ctx.currentTime += 3;
    const before = engine.positionS();
    engine.toggle();
    expect(engine.active).toBe("B");
    expect(ctx.started).toHaveLength(2);
    expect(engine.positionS()).toBe(before);
    expect([gainA.gain.value, gainB.gain.value]).toEqual([0, 1]);
    expect(gainB.gain.events.at(-1)).toEqual(["ramp", 1, ctx.currentTime + SWITCH_RAMP_S]);
  });

  it("applies the level-matching gain to the source heard, and none when matching is off", () => {
    const ctx = new FakeContext();
    const engine = new AbEngine(ctx, { A: { buffer: print, offsetS: 0 }, B: { buffer: print, offsetS: 0 } });
    const [gainA, gainB] = ctx.gains;
    engine.setLevelMatch(-6, 0);
    expect(gainA.gain.value).toBeCloseTo(Math.pow(10, -6 / 20), 12);
    expect(gainB.gain.value).toBe(0);
    expect(engine.gainDb("A")).toBe(-6);
    engine.setMatching(false);
    expect(gainA.gain.value).toBe(1);
    expect(engine.gainDb("A")).toBe(0);
  });

  it("loops both sources over the same mix region, each at its own buffer time", async () => {
    const ctx = new FakeContext();
    const engine = new AbEngine(ctx, { A: { buffer: preview, offsetS: 20 }, B: { buffer: print, offsetS: 0 } });
    await engine.play();
    // A region reaching past the shared span is clamped to it.
    expect(engine.setLoop({ startS: 22, endS: 35 })).toEqual({ startS: 22, endS: 30 });
    const [a, b] = ctx.started.slice(-2);
    expect([a.loop, a.loopStart, a.loopEnd]).toEqual([true, 2, 10]);
    expect([b.loop, b.loopStart, b.loopEnd]).toEqual([true, 22, 30]);
    expect(ctx.started.slice(0, 2).every((s) => s.stopped)).toBe(true);
    // Position wraps inside the loop: 8 s after 22 s is 22 + (8 mod 8) = 22 s, 9 s after is 23 s.
    ctx.currentTime = a.when + 9;
    expect(engine.positionS()).toBeCloseTo(23, 9);
    expect(engine.setLoop({ startS: 25, endS: 25.2 })).toBeNull();
  });
});

describe("AbEngine with partly loaded sources", () => {
  const span = { startS: 0, endS: 40 };

  it("plays and seeks within what both have decoded, and says when playback has caught up with the loading", async () => {
    const ctx = new FakeContext();
    const engine = new AbEngine(ctx, { A: { buffer: buffer(12, -20), offsetS: 0 }, B: { buffer: buffer(15, -20), offsetS: 0 } }, span);
    expect(engine.span).toEqual(span);
    expect(engine.availableEndS()).toBe(12);
    expect(engine.partial()).toBe(true);
    engine.seek(30);
    expect(engine.positionS()).toBeCloseTo(12 - 1e-3, 9);
    engine.seek(10);
    await engine.play();
    const when = ctx.started[0].when;
    ctx.currentTime = when + 1;
    expect(engine.starved()).toBe(false);
    ctx.currentTime = when + 2;
    expect(engine.starved()).toBe(true);
    // A loop can only lie in decoded audio.
    expect(engine.setLoop({ startS: 5, endS: 20 })).toEqual({ startS: 5, endS: 12 });
  });

  it("swaps in the whole buffer at one scheduled time on the shared clock, at the position the clock reaches then", async () => {
    const ctx = new FakeContext();
    const first = buffer(12, -20);
    const engine = new AbEngine(ctx, { A: { buffer: first, offsetS: 20 }, B: { buffer: buffer(12, -20), offsetS: 20 } }, { startS: 20, endS: 60 });
    engine.seek(25);
    await engine.play();
    const [a0, b0] = ctx.started;
    ctx.currentTime = a0.when + 3.25;
    const whole = buffer(40, -20);
    engine.replaceBuffer("A", whole);
    expect(ctx.started).toHaveLength(3);
    const a1 = ctx.started[2];
    // The old node stops exactly when the new one starts; B runs on untouched.
    expect(a0.stopAt).toBe(a1.when);
    expect(a1.when).toBeGreaterThan(ctx.currentTime);
    expect(b0.stopped).toBe(false);
    // At a1.when the clock is at 25 + (a1.when − a0.when) on the mix axis: that many seconds into A's buffer, which starts at 20 s.
    expect(a1.offset).toBeCloseTo(5 + (a1.when - a0.when), 9);
    expect(a1.buffer).toBe(whole);
    expect(engine.availableEndS()).toBe(32);
    engine.replaceBuffer("B", buffer(40, -20));
    expect(engine.partial()).toBe(false);
    expect(engine.availableEndS()).toBe(60);
    // Paused: the buffer is kept for the next play, nothing starts.
    engine.pause();
    const count = ctx.started.length;
    engine.replaceBuffer("A", buffer(40, -20));
    expect(ctx.started).toHaveLength(count);
  });
});

describe("player level matching", () => {
  it("measures the shared span of a preview against a print from the decoded audio", () => {
    const m = playerLevelMatch(
      // The print's stored loudness is of the whole print, not of the preview's 10 s: it must not be used.
      { A: { buffer: buffer(10, -14), offsetS: 20, integratedLufs: -14 }, B: { buffer: buffer(40, -20), offsetS: 0, integratedLufs: -99 } },
      { startS: 20, endS: 30 },
    );
    expect(m.matched).toBe(true);
    expect(m.bLufs!).toBeCloseTo(-20, 0);
    expect(m.gainADb).toBeCloseTo(-(m.aLufs! - m.bLufs!), 12);
    expect(m.gainBDb).toBe(0);
  });

  it("uses the stored integrated loudness when the whole of both sources is compared", () => {
    const m = playerLevelMatch({ A: { buffer: buffer(5, -20), offsetS: 0, integratedLufs: -11.5 }, B: { buffer: buffer(5, -20), offsetS: 0, integratedLufs: -14 } }, { startS: 0, endS: 5 });
    expect(m).toMatchObject({ gainADb: -2.5, gainBDb: 0, aLufs: -11.5, bLufs: -14 });
  });

  it("still uses the stored loudness of a whole source whose buffer holds only its first seconds so far", () => {
    const whole = { startS: 0, endS: 40 };
    const m = playerLevelMatch(
      { A: { buffer: buffer(12, -20), offsetS: 0, whole, integratedLufs: -9 }, B: { buffer: buffer(12, -20), offsetS: 0, whole, integratedLufs: -13 } },
      whole,
    );
    expect(m).toMatchObject({ gainADb: -4, gainBDb: 0, aLufs: -9, bLufs: -13 });
  });
});

describe("peaks and numbers", () => {
  it("draws a partly loaded buffer at its place: columns past its end stay flat", () => {
    const x = new Float32Array(500).fill(0.5);
    const { max } = computePeaks([x], 0, 1000, 10);
    expect(Array.from(max)).toEqual([0.5, 0.5, 0.5, 0.5, 0.5, 0, 0, 0, 0, 0]);
  });

  it("keeps each column's extremes, so a one-sample click still shows", () => {
    const x = new Float32Array(1000);
    x[737] = 0.9;
    x[100] = -0.5;
    const { min, max } = computePeaks([x], 0, 1000, 10);
    expect(Array.from(max).map((v) => Math.round(v * 10) / 10)).toEqual([0, 0, 0, 0, 0, 0, 0, 0.9, 0, 0]);
    expect(min[1]).toBeCloseTo(-0.5, 6);
  });

  it("formats times and gains with their units", () => {
    expect(formatClock(75.25)).toBe("1:15.3");
    expect(formatClock(59.97)).toBe("1:00.0");
    expect(formatDb(-3.24)).toBe("−3.2 dB");
    expect(formatDb(0)).toBe("0.0 dB");
    expect(formatDb(1.25, "LU")).toBe("+1.3 LU");
  });
});
