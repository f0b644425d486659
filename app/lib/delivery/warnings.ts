// Checks of a delivered file against its format: what an engineer should look
// at before the files go out. Tolerances: 0.05 dB over the ceiling (the meter's
// 4× oversampled true peak can read a few hundredths above the limiter's own
// estimate, from memory), 0.5 LU from a loudness target (resampling and
// dither move the integrated loudness by far less).
import type { DeliveryFormat } from "../../../dsp/delivery/delivery-format.ts";
import type { DeliveryMeasures } from "./loudness-report.ts";

export const CEILING_TOLERANCE_DB = 0.05;
export const TARGET_TOLERANCE_LU = 0.5;

export interface DeliveredFile {
  sampleRate: number;
  bitDepth: number;
  sampleFormat: "int" | "float";
}

export function deliveryWarnings(format: DeliveryFormat, analysis: DeliveryMeasures, file?: DeliveredFile): string[] {
  const warnings: string[] = [];
  if (!Number.isFinite(analysis.integratedLufs)) warnings.push("the file is silent (no gated loudness)");
  if (analysis.truePeakDbtp > format.ceilingDbtp + CEILING_TOLERANCE_DB) {
    warnings.push(`true peak ${analysis.truePeakDbtp.toFixed(2)} dBTP is above the ceiling of ${format.ceilingDbtp} dBTP`);
  }
  if (format.targetLufs !== undefined && Number.isFinite(analysis.integratedLufs)) {
    const offLu = analysis.integratedLufs - format.targetLufs;
    if (Math.abs(offLu) > TARGET_TOLERANCE_LU) {
      warnings.push(`integrated loudness ${analysis.integratedLufs.toFixed(1)} LUFS is ${Math.abs(offLu).toFixed(1)} LU ${offLu > 0 ? "above" : "below"} the target of ${format.targetLufs} LUFS`);
    }
  }
  if (file) {
    if (file.sampleRate !== format.sampleRate) warnings.push(`the file is ${file.sampleRate} Hz, the format asks for ${format.sampleRate} Hz`);
    const wanted = format.bitDepth === "32f" ? "32-bit float" : `${format.bitDepth}-bit`;
    const got = file.sampleFormat === "float" ? `${file.bitDepth}-bit float` : `${file.bitDepth}-bit`;
    if (wanted !== got) warnings.push(`the file is ${got}, the format asks for ${wanted}`);
  }
  return warnings;
}
