// The demo's audio: for each demo track without a mix, a short stereo mix
// synthesized here (seeded noise bands as a beat, a bass and a chord, in a
// quiet–loud–quiet shape so the loudest-30-s preview picks the loud middle),
// stored as version 1 with its analysis queued, a track chain from the
// "Gentle master" template, and for two tracks a preview and a print queued
// for the worker that `npm start` runs beside the web server. Runs after
// 01_demo.ts and 02_templates.ts; a track that already has a mix is left
// alone, so running it twice adds nothing.
import { createReadStream } from "node:fs";
import { mkdtemp, rm } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import type { Knex } from "knex";
import { createRng } from "../../dsp/testing/signals.ts";
import { createWavWriter } from "../../dsp/io/wav-writer.ts";
import { dbToLinear } from "../../dsp/units.ts";
import { db } from "../../app/lib/db.server.ts";
import { stopQueue } from "../../app/lib/queue.server.ts";
import { addUploadedMix } from "../../app/models/mix.server.ts";
import { createChain, createRevision } from "../../app/models/chain.server.ts";
import { createRender } from "../../app/models/render.server.ts";
import { DEMO_ACCOUNTS } from "./01_demo.ts";
import { DEMO_STUDIO_NAME } from "./02_templates.ts";

const SAMPLE_RATE = 48_000;
const TEMPLATE_NAME = "Gentle master";

export type DemoMixSpec = {
  seed: number;
  seconds: number;
  bpm: number;
  /** Bass root per bar, cycling (Hz). */
  rootsHz: number[];
  /** Chord intervals above the root, in semitones. */
  chord: number[];
  /** Seconds of quiet intro and quiet outro around the loud middle. */
  introS: number;
  outroS: number;
  /** Queue a preview (the loudest 30 s) and a print for this track. */
  render: boolean;
};

/** One mix per demo track, by title. Longer than 30 s where a preview is queued, so the loudest window is a real choice. */
export const DEMO_MIXES: Record<string, DemoMixSpec> = {
  "Tin Roof Morning": { seed: 0x7a11, seconds: 44, bpm: 96, rootsHz: [55, 55, 49, 41.2], chord: [12, 15, 19], introS: 9, outroS: 9, render: true },
  Cartographer: { seed: 0x7a12, seconds: 26, bpm: 118, rootsHz: [61.74, 55, 73.42, 65.41], chord: [12, 16, 19], introS: 5, outroS: 5, render: false },
  "Slow Ferry": { seed: 0x7a13, seconds: 28, bpm: 72, rootsHz: [43.65, 49, 55, 49], chord: [12, 15, 22], introS: 7, outroS: 6, render: false },
  "Lowlight Weather": { seed: 0x7a14, seconds: 24, bpm: 88, rootsHz: [51.91, 46.25, 41.2, 46.25], chord: [12, 15, 19, 22], introS: 5, outroS: 5, render: false },
  "Glasshouse Signal": { seed: 0x7a15, seconds: 40, bpm: 124, rootsHz: [65.41, 58.27, 51.91, 58.27], chord: [12, 16, 19, 23], introS: 8, outroS: 8, render: true },
};

/** Smooth 0→1 over [a, b] (raised cosine), for section changes without clicks. */
function ramp(t: number, a: number, b: number): number {
  if (t <= a) return 0;
  if (t >= b) return 1;
  return 0.5 - 0.5 * Math.cos((Math.PI * (t - a)) / (b - a));
}

/**
 * The mix as two planar channels, peak-normalised to −1 dBFS. A kick (low
 * noise band plus a falling sine) on every beat, a snare (mid band) on 2 and
 * 4, hats (high band) on eighths panned right, a bass, and a chord swelling
 * in per bar with its voices spread across the stereo field.
 */
export function synthesizeDemoMix(spec: DemoMixSpec, sampleRate = SAMPLE_RATE): [Float64Array, Float64Array] {
  const frames = Math.round(spec.seconds * sampleRate);
  const left = new Float64Array(frames);
  const right = new Float64Array(frames);
  const rng = createRng(spec.seed);
  const beatS = 60 / spec.bpm;
  const barS = 4 * beatS;
  const loudFrom = spec.introS;
  const loudTo = spec.seconds - spec.outroS;
  const twoPi = 2 * Math.PI;
  // One-pole smoothing coefficients for the noise bands (low < 150 Hz, mid, high > 5 kHz, roughly).
  const aLow = 1 - Math.exp((-twoPi * 150) / sampleRate);
  const aMid = 1 - Math.exp((-twoPi * 1800) / sampleRate);
  const aHigh = 1 - Math.exp((-twoPi * 5000) / sampleRate);
  let low = 0, mid = 0, midLow = 0, high = 0;
  let bassPhase = 0, kickPhase = 0;
  const chordPhases = spec.chord.map(() => 0);
  const chordRatios = spec.chord.map((semitones) => 2 ** (semitones / 12));
  const chordPan = spec.chord.map((_, k) => (spec.chord.length === 1 ? 0.5 : 0.2 + (0.6 * k) / (spec.chord.length - 1)));
  // Decays run as per-sample multipliers, reset at each hit (cheaper than exp() per sample).
  const decay = (tauS: number) => Math.exp(-1 / (tauS * sampleRate));
  const kKick = decay(0.09), kSnare = decay(0.07), kHat = decay(0.025), kSweep = decay(0.03), kChord = decay(0.4), kBass = decay(2 * barS);
  let kickEnv = 0, snareEnv = 0, hatEnv = 0, sweep = 0, chordRest = 1, bassEnv = 0;
  let beatIndex = -1, eighthIndex = -1, bar = -1;
  let rootHz = spec.rootsHz[0];
  let peak = 0;
  for (let i = 0; i < frames; i++) {
    const t = i / sampleRate;
    // Section shape: quiet intro (about −12 dB, hats, bass and chord but no kick or snare), loud middle, quiet outro.
    const loud = ramp(t, loudFrom - 1.5, loudFrom + 0.5) * (1 - ramp(t, loudTo - 0.5, loudTo + 1.5));
    const level = 0.25 + 0.75 * loud;
    const fadeOut = 1 - ramp(t, spec.seconds - 2, spec.seconds);
    const fadeIn = ramp(t, 0, 0.05);

    const white = 2 * rng() - 1;
    low += aLow * (white - low);
    mid += aMid * (white - mid);
    midLow += aLow * (mid - midLow);
    high += aHigh * (white - high);
    const midBand = mid - midLow;
    const highBand = white - high;

    const nowBeat = Math.floor(t / beatS);
    if (nowBeat !== beatIndex) {
      beatIndex = nowBeat;
      kickEnv = 1;
      sweep = 1;
      snareEnv = beatIndex % 2 === 1 ? 1 : 0;
    }
    const nowEighth = Math.floor((2 * t) / beatS);
    if (nowEighth !== eighthIndex) {
      eighthIndex = nowEighth;
      hatEnv = 1;
    }
    const nowBar = Math.floor(t / barS);
    if (nowBar !== bar) {
      bar = nowBar;
      rootHz = spec.rootsHz[bar % spec.rootsHz.length];
      chordRest = 1;
      bassEnv = 1;
    }
    // The kick's sine falls from about 120 Hz to 50 Hz over each hit.
    kickPhase += (twoPi * (50 + 70 * sweep)) / sampleRate;
    if (kickPhase > twoPi) kickPhase -= twoPi; // small arguments keep Math.sin fast
    const kick = loud * kickEnv * (0.55 * Math.sin(kickPhase) + 1.2 * low);
    const snare = loud * snareEnv * 1.6 * midBand;
    const hat = hatEnv * 0.35 * highBand;
    kickEnv *= kKick;
    sweep *= kSweep;
    snareEnv *= kSnare;
    hatEnv *= kHat;

    bassPhase += (twoPi * rootHz) / sampleRate;
    if (bassPhase > twoPi) bassPhase -= twoPi;
    const bass = (0.3 + 0.2 * loud) * bassEnv * (Math.sin(bassPhase) + 0.3 * Math.sin(2 * bassPhase));
    bassEnv *= kBass;
    const chordEnv = 0.12 * (1 - chordRest);
    chordRest *= kChord;
    let chordL = 0, chordR = 0;
    for (let k = 0; k < spec.chord.length; k++) {
      let phase = chordPhases[k] + (twoPi * rootHz * chordRatios[k]) / sampleRate;
      if (phase > twoPi) phase -= twoPi;
      chordPhases[k] = phase;
      const v = chordEnv * Math.sin(phase);
      chordL += v * (1 - chordPan[k]);
      chordR += v * chordPan[k];
    }

    const g = level * fadeIn * fadeOut;
    const centre = kick + snare + bass;
    left[i] = g * (centre + chordL + 0.4 * hat);
    right[i] = g * (centre + chordR + 0.8 * hat);
    const p = Math.max(Math.abs(left[i]), Math.abs(right[i]));
    if (p > peak) peak = p;
  }
  const scale = dbToLinear(-1) / peak;
  for (let i = 0; i < frames; i++) {
    left[i] *= scale;
    right[i] *= scale;
  }
  return [left, right];
}

async function writeDemoMix(filePath: string, spec: DemoMixSpec): Promise<void> {
  const channels = synthesizeDemoMix(spec);
  const writer = await createWavWriter(filePath, { sampleRate: SAMPLE_RATE, channels: 2, bitDepth: 24, float: false });
  try {
    await writer.write(channels, channels[0].length);
  } finally {
    await writer.close();
  }
}

export type DemoAudioResult = { mixes: number; renders: number };

/** Adds the demo audio to the demo studio's tracks that have no mix yet. */
export async function seedDemoAudio(knex: Knex): Promise<DemoAudioResult> {
  const result: DemoAudioResult = { mixes: 0, renders: 0 };
  const studio = await knex("studios").where({ name: DEMO_STUDIO_NAME }).first<{ id: string } | undefined>("id");
  if (!studio) return result;
  const engineer = await knex("users").where({ email: DEMO_ACCOUNTS.engineer.email }).first<{ id: string } | undefined>("id");
  const template = await knex("chains as c")
    .join("chain_revisions as cr", "cr.chain_id", "c.id")
    .where({ "c.studio_id": studio.id, "c.name": TEMPLATE_NAME })
    .whereNull("c.track_id")
    .orderBy("cr.revision", "desc")
    .first<{ params: unknown } | undefined>("cr.params");
  const tracks = await knex("tracks as t")
    .join("releases as r", "r.id", "t.release_id")
    .where({ "r.studio_id": studio.id })
    .whereIn("t.title", Object.keys(DEMO_MIXES))
    .whereNotExists(knex("mixes as m").whereRaw("m.track_id = t.id"))
    .orderBy(["r.title", "t.position"])
    .select<{ id: string; title: string }[]>("t.id", "t.title");
  if (tracks.length === 0) return result;

  const scratch = await mkdtemp(path.join(os.tmpdir(), "tidemark-demo-audio-"));
  try {
    for (const track of tracks) {
      const spec = DEMO_MIXES[track.title];
      const fileName = `${track.title} mix 1.wav`;
      const filePath = path.join(scratch, "mix.wav");
      await writeDemoMix(filePath, spec);
      const mix = await addUploadedMix({ trackId: track.id, originalName: fileName, body: createReadStream(filePath), uploadedBy: engineer?.id ?? null });
      await rm(filePath);
      result.mixes++;
      if (!template) continue;
      const chain = await createChain({ studioId: studio.id, trackId: track.id, name: TEMPLATE_NAME });
      const revision = await createRevision(chain.id, template.params, engineer?.id ?? null);
      if (!spec.render) continue;
      for (const kind of ["preview", "print"] as const) {
        await createRender({ mixId: mix.id, chainRevisionId: revision.id, kind, createdBy: engineer?.id ?? null });
        result.renders++;
      }
    }
  } finally {
    await rm(scratch, { recursive: true, force: true });
  }
  return result;
}

export async function seed(knex: Knex): Promise<void> {
  try {
    const { mixes, renders } = await seedDemoAudio(knex);
    if (mixes > 0) console.error(`[tidemark] demo audio: ${mixes} mixes stored, ${renders} renders queued`);
  } finally {
    // The models use the process's own pool and queue; a short-lived script must close both to exit.
    await stopQueue();
    if (db !== knex) await db.destroy();
  }
}
