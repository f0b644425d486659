// A delivery format (what one file of a release must be) and its checks, plus
// the coding-history line that describes it in the bext chunk. Line syntax
// after EBU R 98 (from memory): comma-separated key=value, A= coding
// algorithm, F= sample rate in Hz, W= word length in bits, M= mode,
// T= free text; one line per step the audio went through.

export const DELIVERY_SAMPLE_RATES = [44100, 48000, 88200, 96000, 176400, 192000] as const;
export type DeliverySampleRate = (typeof DELIVERY_SAMPLE_RATES)[number];
export type DeliveryBitDepth = 16 | 24 | "32f";

export interface DeliveryFormat {
  sampleRate: DeliverySampleRate;
  bitDepth: DeliveryBitDepth;
  dither: "tpdf" | "none";
  /** True-peak ceiling of the print, dBTP (<= 0). */
  ceilingDbtp: number;
  /** Integrated loudness to reach before limiting, LUFS; absent = keep the level. */
  targetLufs?: number;
}

/** Throws with a specific message when a format cannot be printed. */
export function checkDeliveryFormat(format: DeliveryFormat): DeliveryFormat {
  if (!(DELIVERY_SAMPLE_RATES as readonly number[]).includes(format.sampleRate)) {
    throw new RangeError(`sampleRate must be one of ${DELIVERY_SAMPLE_RATES.join(", ")} Hz (got ${format.sampleRate})`);
  }
  if (format.bitDepth !== 16 && format.bitDepth !== 24 && format.bitDepth !== "32f") {
    throw new RangeError(`bitDepth must be 16, 24 or "32f" (got ${JSON.stringify(format.bitDepth)})`);
  }
  if (format.dither !== "tpdf" && format.dither !== "none") {
    throw new RangeError(`dither must be "tpdf" or "none" (got ${JSON.stringify(format.dither)})`);
  }
  if (!Number.isFinite(format.ceilingDbtp) || format.ceilingDbtp > 0 || format.ceilingDbtp < -20) {
    throw new RangeError(`ceilingDbtp must be between -20 and 0 dBTP (got ${format.ceilingDbtp})`);
  }
  if (format.targetLufs !== undefined && (!Number.isFinite(format.targetLufs) || format.targetLufs > 0 || format.targetLufs < -60)) {
    throw new RangeError(`targetLufs must be between -60 and 0 LUFS (got ${format.targetLufs})`);
  }
  return format;
}

export const wordLengthBits = (bitDepth: DeliveryBitDepth): number => (bitDepth === "32f" ? 32 : bitDepth);

/**
 * One coding-history line, e.g. "A=PCM,F=48000,W=24,M=stereo,T=Tidemark print".
 * Float audio is marked A=PCM-FLOAT (our choice; R 98 predates float WAV).
 */
export function codingHistoryLine(sampleRate: number, wordBits: number, float: boolean, channels: number, text: string): string {
  const mode = channels === 1 ? "mono" : channels === 2 ? "stereo" : `${channels}ch`;
  const clean = text.replace(/[,\r\n]/g, " ");
  return `A=${float ? "PCM-FLOAT" : "PCM"},F=${sampleRate},W=${wordBits},M=${mode},T=${clean}`;
}
