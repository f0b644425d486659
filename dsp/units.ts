// Unit conversions in one place. Levels: dB relative to full scale (±1.0).
// "frames" = one sample per channel; "samples" = individual values.

export const dbToLinear = (gainDb: number): number => Math.pow(10, gainDb / 20);

/** -Infinity for 0. */
export const linearToDb = (gainLinear: number): number => 20 * Math.log10(Math.abs(gainLinear));

/** Power ratio (e.g. mean square) to dB. */
export const powerToDb = (power: number): number => 10 * Math.log10(power);

export const dbToPower = (levelDb: number): number => Math.pow(10, levelDb / 10);

export const msToFrames = (timeMs: number, sampleRate: number): number =>
  Math.round((timeMs / 1000) * sampleRate);

export const secondsToFrames = (timeS: number, sampleRate: number): number =>
  Math.round(timeS * sampleRate);

export const framesToSeconds = (frames: number, sampleRate: number): number => frames / sampleRate;

/**
 * One-pole smoothing coefficient for a time constant: after `timeMs` a step
 * has reached 1 - 1/e of its final value.
 */
export const timeConstantCoeff = (timeMs: number, sampleRate: number): number =>
  timeMs <= 0 ? 0 : Math.exp(-1000 / (timeMs * sampleRate));

/** JSON has no -Infinity: report silent levels as null. */
export const finiteOrNull = (value: number): number | null => (Number.isFinite(value) ? value : null);
