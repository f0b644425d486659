// The delivery formats a studio starts with (it may edit, add or remove them).
// Both masters come from the same approved print:
// - a 24-bit 48 kHz streaming master;
// - a 16-bit 44.1 kHz CD master, TPDF-dithered to 16 bits.
// Both use a −1 dBTP ceiling. −0.3 dBTP is also common for CD, but a CD
// master is routinely ripped and encoded to lossy formats, whose decoders can
// overshoot by more than 0.3 dB; −1 dBTP keeps one safe ceiling for both
// (common practice). 24-bit output is dithered too: it costs nothing audible
// and keeps the quantisation error free of the signal (common practice).
import type { DeliveryFormat } from "../../../dsp/delivery/delivery-format.ts";

export interface NamedDeliveryFormat extends DeliveryFormat {
  name: string;
}

export const DEFAULT_DELIVERY_FORMATS: readonly NamedDeliveryFormat[] = [
  { name: "Streaming master 24-bit 48 kHz", sampleRate: 48000, bitDepth: 24, dither: "tpdf", ceilingDbtp: -1 },
  { name: "CD master 16-bit 44.1 kHz", sampleRate: 44100, bitDepth: 16, dither: "tpdf", ceilingDbtp: -1 },
];
