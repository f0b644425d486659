// The Broadcast Wave `bext` chunk, EBU Tech 3285 version 2: building and
// parsing its bytes (little-endian). Layout of the 602 fixed bytes:
//   Description 256 | Originator 32 | OriginatorReference 32 |
//   OriginationDate 10 (yyyy-mm-dd) | OriginationTime 8 (hh:mm:ss) |
//   TimeReference uint64 as low, high uint32 (frames since midnight) |
//   Version uint16 (= 2) | UMID 64 | LoudnessValue, LoudnessRange,
//   MaxTruePeakLevel, MaxMomentaryLoudness, MaxShortTermLoudness int16 each |
//   Reserved 180 (zeros) | then CodingHistory, ASCII lines ending CR/LF.
// Loudness fields hold round(value x 100) as int16 (LUFS, LU, dBTP).
//
// From memory (check against the published document before relying on it):
// - 0x7FFF (32767) marks a loudness field as "not set"; we write it for a
//   missing value and read it back as null. A version 0/1 chunk has zeros
//   where the loudness fields are (then Reserved), so we read none there.
// - Text fields are ASCII, NUL-padded when shorter than the field.
// Our policy for values: text longer than its field or outside printable
// ASCII is rejected, not truncated; a finite loudness value outside
// -327.68 ... 327.66 (int16 range, 32767 being the "not set" mark) is
// rejected, and -Infinity (the loudness of digital silence) is written as
// the lowest value, -327.68; NaN is rejected.
//
// ISRC (common practice, chosen here): EBU guidance allows it in the bext
// chunk; we carry it as one CodingHistory line "ISRC:CCXXXYYNNNNN" (compact
// form, ISO 3901), after the coding history proper, and the parser returns it
// as `isrc` and leaves it out of `codingHistory`.

import { normaliseIsrc, parseIsrc } from "./isrc.ts";

export const BEXT_FIXED_BYTES = 602;
/** Loudness "not set" (from memory, see above). */
export const LOUDNESS_NOT_SET = 0x7fff;

export interface BextLoudness {
  /** LoudnessValue: integrated loudness, LUFS. */
  integratedLufs: number | null;
  /** LoudnessRange: LU (EBU Tech 3342). */
  loudnessRangeLu: number | null;
  /** MaxTruePeakLevel: dBTP. */
  maxTruePeakDbtp: number | null;
  /** MaxMomentaryLoudness: LUFS (400 ms). */
  maxMomentaryLufs: number | null;
  /** MaxShortTermLoudness: LUFS (3 s). */
  maxShortTermLufs: number | null;
}

export interface Bext {
  description: string;
  originator: string;
  originatorReference: string;
  /** yyyy-mm-dd, or "" when not set. */
  originationDate: string;
  /** hh:mm:ss, or "" when not set. */
  originationTime: string;
  /** Sample frames since midnight of the first frame (uint64; exact up to 2^53). */
  timeReferenceFrames: number;
  /** 64 bytes (a 32-byte basic UMID is padded with zeros); all zeros when none. */
  umid: Uint8Array;
  loudness: BextLoudness;
  /** Coding history lines, without their CR/LF. */
  codingHistory: string[];
  /** Compact ISRC, or null. */
  isrc: string | null;
}

export interface ParsedBext extends Bext {
  /** Version found in the chunk (we always write 2). */
  version: number;
}

const LOUDNESS_FIELDS = ["integratedLufs", "loudnessRangeLu", "maxTruePeakDbtp", "maxMomentaryLufs", "maxShortTermLufs"] as const;

export const emptyLoudness = (): BextLoudness => ({
  integratedLufs: null, loudnessRangeLu: null, maxTruePeakDbtp: null, maxMomentaryLufs: null, maxShortTermLufs: null,
});

export function emptyBext(): Bext {
  return {
    description: "", originator: "", originatorReference: "", originationDate: "", originationTime: "",
    timeReferenceFrames: 0, umid: new Uint8Array(64), loudness: emptyLoudness(), codingHistory: [], isrc: null,
  };
}

/** round(value x 100) as int16, per Tech 3285 v2; null -> 0x7FFF. */
export function encodeLoudness(value: number | null, field: string): number {
  if (value === null) return LOUDNESS_NOT_SET;
  if (Number.isNaN(value)) throw new RangeError(`bext ${field}: NaN is not a loudness value`);
  if (value === -Infinity) return -32768;
  const scaled = Math.round(value * 100);
  if (!Number.isFinite(value) || scaled < -32768 || scaled > 32766) {
    throw new RangeError(`bext ${field}: ${value} is outside -327.68 ... 327.66`);
  }
  return scaled;
}

export const decodeLoudness = (stored: number): number | null => (stored === LOUDNESS_NOT_SET ? null : stored / 100);

function checkAscii(text: string, field: string): void {
  for (let i = 0; i < text.length; i++) {
    const code = text.charCodeAt(i);
    if (code < 0x20 || code > 0x7e) throw new RangeError(`bext ${field}: character ${JSON.stringify(text[i])} is not printable ASCII`);
  }
}

function writeAscii(view: DataView, offset: number, text: string, length: number, field: string): void {
  if (text.length > length) throw new RangeError(`bext ${field}: ${text.length} characters, the field holds ${length}`);
  checkAscii(text, field);
  for (let i = 0; i < text.length; i++) view.setUint8(offset + i, text.charCodeAt(i));
}

function readAscii(bytes: Uint8Array, offset: number, length: number): string {
  let end = offset;
  while (end < offset + length && bytes[end] !== 0) end++;
  // latin1 so that a stray byte from another writer never throws.
  return new TextDecoder("latin1").decode(bytes.subarray(offset, end));
}

function checkFormats(bext: Bext): void {
  if (bext.originationDate !== "" && !/^\d{4}-(0[1-9]|1[0-2])-(0[1-9]|[12]\d|3[01])$/.test(bext.originationDate)) {
    throw new RangeError(`bext originationDate must be yyyy-mm-dd (got ${JSON.stringify(bext.originationDate)})`);
  }
  if (bext.originationTime !== "" && !/^([01]\d|2[0-3]):[0-5]\d:[0-5]\d$/.test(bext.originationTime)) {
    throw new RangeError(`bext originationTime must be hh:mm:ss (got ${JSON.stringify(bext.originationTime)})`);
  }
  if (!Number.isSafeInteger(bext.timeReferenceFrames) || bext.timeReferenceFrames < 0) {
    throw new RangeError(`bext timeReferenceFrames must be a non-negative integer (got ${bext.timeReferenceFrames})`);
  }
  if (bext.umid.length !== 64 && bext.umid.length !== 32 && bext.umid.length !== 0) {
    throw new RangeError(`bext umid must be 0, 32 or 64 bytes (got ${bext.umid.length})`);
  }
  for (const line of bext.codingHistory) {
    checkAscii(line, "codingHistory");
    if (/^ISRC:/i.test(line)) throw new RangeError("bext codingHistory: give the ISRC as `isrc`, not as a line");
  }
}

/** The chunk's payload (without the 8-byte chunk header), version 2. */
export function buildBextPayload(bext: Bext): Uint8Array {
  checkFormats(bext);
  const lines = [...bext.codingHistory];
  if (bext.isrc !== null) lines.push(`ISRC:${normaliseIsrc(bext.isrc)}`);
  const history = lines.map((line) => `${line}\r\n`).join("");
  const bytes = new Uint8Array(BEXT_FIXED_BYTES + history.length);
  const view = new DataView(bytes.buffer);
  writeAscii(view, 0, bext.description, 256, "description");
  writeAscii(view, 256, bext.originator, 32, "originator");
  writeAscii(view, 288, bext.originatorReference, 32, "originatorReference");
  writeAscii(view, 320, bext.originationDate, 10, "originationDate");
  writeAscii(view, 330, bext.originationTime, 8, "originationTime");
  view.setUint32(338, bext.timeReferenceFrames % 2 ** 32, true);
  view.setUint32(342, Math.floor(bext.timeReferenceFrames / 2 ** 32), true);
  view.setUint16(346, 2, true);
  bytes.set(bext.umid, 348);
  LOUDNESS_FIELDS.forEach((field, i) => view.setInt16(412 + 2 * i, encodeLoudness(bext.loudness[field], field), true));
  // 422 ... 601: Reserved, left as zeros.
  for (let i = 0; i < history.length; i++) bytes[BEXT_FIXED_BYTES + i] = history.charCodeAt(i);
  return bytes;
}

/** The whole chunk: "bext", size, payload, and a pad byte when the size is odd (RIFF rule). */
export function buildBextChunk(bext: Bext): Uint8Array {
  const payload = buildBextPayload(bext);
  const chunk = new Uint8Array(8 + payload.length + (payload.length % 2));
  const view = new DataView(chunk.buffer);
  chunk.set([0x62, 0x65, 0x78, 0x74], 0); // "bext"
  view.setUint32(4, payload.length, true);
  chunk.set(payload, 8);
  return chunk;
}

/** Parses a chunk payload (the bytes after the 8-byte header). */
export function parseBextPayload(payload: Uint8Array): ParsedBext {
  if (payload.length < BEXT_FIXED_BYTES) {
    throw new RangeError(`bext chunk is ${payload.length} bytes; at least ${BEXT_FIXED_BYTES} expected`);
  }
  const view = new DataView(payload.buffer, payload.byteOffset, payload.byteLength);
  const version = view.getUint16(346, true);
  const loudness = emptyLoudness();
  if (version >= 2) {
    LOUDNESS_FIELDS.forEach((field, i) => (loudness[field] = decodeLoudness(view.getInt16(412 + 2 * i, true))));
  }
  const historyText = readAscii(payload, BEXT_FIXED_BYTES, payload.length - BEXT_FIXED_BYTES);
  const codingHistory: string[] = [];
  let isrc: string | null = null;
  for (const line of historyText.split(/\r?\n/)) {
    if (line === "") continue;
    const isrcLine = /^ISRC:(.*)$/i.exec(line);
    const parsed = isrcLine ? parseIsrc(isrcLine[1]) : null;
    if (parsed?.ok && isrc === null) isrc = parsed.isrc;
    else codingHistory.push(line);
  }
  return {
    version,
    description: readAscii(payload, 0, 256),
    originator: readAscii(payload, 256, 32),
    originatorReference: readAscii(payload, 288, 32),
    originationDate: readAscii(payload, 320, 10),
    originationTime: readAscii(payload, 330, 8),
    timeReferenceFrames: view.getUint32(338, true) + view.getUint32(342, true) * 2 ** 32,
    umid: payload.slice(348, 412),
    loudness,
    codingHistory,
    isrc,
  };
}
