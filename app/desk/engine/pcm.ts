// WAV sample bytes → planar Float32Array, with the scaling of the renderer's
// reader (dsp/io/wav-reader.ts: 16-bit / 2^15, 24-bit / 2^23, 32-bit / 2^31,
// float as is), so the desk hears the numbers the print is made from. 16-
// and 24-bit PCM and 32-bit float are exact in float32; 32-bit integer and
// 64-bit float are rounded to float32's 24-bit mantissa.

import type { WavLayout } from "../../components/player/progressive-wav.ts";

export function sampleFormat(layout: WavLayout): { bits: number; float: boolean } {
  const fmt = new DataView(layout.fmtChunk.buffer, layout.fmtChunk.byteOffset, layout.fmtChunk.byteLength);
  const tag = fmt.getUint16(8, true);
  const code = tag === 0xfffe && layout.fmtChunk.length >= 8 + 26 ? fmt.getUint16(8 + 24, true) : tag;
  const bits = fmt.getUint16(22, true);
  if (code === 3 && (bits === 32 || bits === 64)) return { bits, float: true };
  if (code === 1 && (bits === 16 || bits === 24 || bits === 32)) return { bits, float: false };
  throw new Error(`the desk reads 16/24/32-bit PCM and 32/64-bit float WAV, not format ${code} at ${bits} bits`);
}

/** Decodes whole frames of `bytes` into `out` (planar) from frame `at`. Returns the frames decoded. */
export function decodePcmInto(layout: WavLayout, bytes: Uint8Array, out: Float32Array[], at: number): number {
  const { bits, float } = sampleFormat(layout);
  const nch = layout.channels, bytesPer = bits / 8;
  const frames = Math.min(Math.floor(bytes.length / layout.blockAlign), out[0].length - at);
  const dv = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  for (let c = 0; c < nch; c++) {
    const o = out[c];
    let p = c * bytesPer;
    for (let i = 0; i < frames; i++, p += layout.blockAlign) {
      let v: number;
      if (float) v = bits === 32 ? dv.getFloat32(p, true) : dv.getFloat64(p, true);
      else if (bits === 16) v = dv.getInt16(p, true) * (1 / 32768);
      else if (bits === 24) v = ((dv.getUint8(p) | (dv.getUint8(p + 1) << 8) | (dv.getInt8(p + 2) << 16)) >> 0) * (1 / 8388608);
      else v = dv.getInt32(p, true) * (1 / 2147483648);
      o[at + i] = v;
    }
  }
  return frames;
}
