// Push: a desk-only exaggeration of what a stage does, so the engineer hears
// it clearly before pulling it back. It changes numbers only (never the
// structure), so it always glides, and releasing it glides back to the
// chain's own settings, which are kept untouched beside (bit for bit).

import type { Stage } from "../chain/schema.ts";

export const PUSH = {
  eqGainFactor: 3,
  compressThresholdDb: -12,
  multibandThresholdDb: -12,
  saturateDriveDb: 12,
  limitInputGainDb: 6,
  trimGainFactor: 2,
  resonanceThresholdDb: -6,
  resonanceMaxCutDb: 6,
  tapeDriveDb: 12,
} as const;

/** What Push does per stage type (help text for the desk). */
export const PUSH_DESCRIPTIONS: Record<Stage["type"], string> = {
  trim: "Doubles the trim in dB (a 2 dB trim becomes 4 dB).",
  eq: "Triples every band's gain (a 1.5 dB lift becomes 4.5 dB); filters without gain stay as they are.",
  saturate: "Adds 12 dB of drive into the saturation curve.",
  compress: "Lowers the threshold by 12 dB, so the compressor works much harder.",
  multiband: "Lowers every band's threshold by 12 dB.",
  limit: "Adds 6 dB of input gain into the limiter, against the same ceiling.",
  resonance: "Lowers the threshold by 6 dB and allows 6 dB more cut, so every build-up it catches is pulled down hard.",
  tape: "Adds 12 dB of drive into the tape curve (level-compensated), so its colour turns to crunch.",
};

/** The pushed copy of a stage's settings (a new object; `stage` is not changed). */
export function pushStage(stage: Stage): Stage {
  switch (stage.type) {
    case "trim":
      return { ...stage, gainDb: stage.gainDb * PUSH.trimGainFactor };
    case "eq":
      return { ...stage, bands: stage.bands.map((b) => ({ ...b, gainDb: b.gainDb * PUSH.eqGainFactor })) };
    case "saturate":
      return { ...stage, driveDb: stage.driveDb + PUSH.saturateDriveDb };
    case "compress":
      return { ...stage, thresholdDb: stage.thresholdDb + PUSH.compressThresholdDb };
    case "multiband":
      return { ...stage, bands: stage.bands.map((b) => ({ ...b, thresholdDb: b.thresholdDb + PUSH.multibandThresholdDb })) };
    case "limit":
      return { ...stage, inputGainDb: stage.inputGainDb + PUSH.limitInputGainDb };
    // Pushed values stay inside the schema's ranges (threshold 0–24 dB, cut 0–24 dB, drive 0–24 dB).
    case "resonance":
      return { ...stage, thresholdDb: Math.max(0, stage.thresholdDb + PUSH.resonanceThresholdDb), maxCutDb: Math.min(24, stage.maxCutDb + PUSH.resonanceMaxCutDb) };
    case "tape":
      return { ...stage, driveDb: Math.min(24, stage.driveDb + PUSH.tapeDriveDb) };
  }
}
