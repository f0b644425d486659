// Streaming WAV reader: 16/24/32-bit integer PCM and 32-bit float (also
// 64-bit float), plain or WAVE_FORMAT_EXTENSIBLE, mono or stereo,
// 44.1–192 kHz. The chunks before the audio are parsed from one buffered
// read of the header region (another only past a large chunk, or when the
// fmt chunk follows the data), within bounds: at most MAX_HEADER_CHUNKS
// chunks and MAX_HEADER_READS reads, else the file is refused
// ("header-too-long"), so a file padded with a million empty chunks costs
// milliseconds, not minutes. The data chunk is read in blocks of a few
// hundred KB and decoded to planar float64 in [-1, 1). Bad input throws a
// WavFormatError with a specific code.

import { type FileHandle, open } from "node:fs/promises";

export type WavFormatErrorCode =
  | "not-riff"
  | "truncated"
  | "bad-size"
  | "unsupported-codec"
  | "no-frames"
  | "too-many-channels"
  | "non-finite"
  | "header-too-long"
  | "unsupported-format";

export class WavFormatError extends Error {
  readonly code: WavFormatErrorCode;
  constructor(code: WavFormatErrorCode, message: string) {
    super(message);
    this.name = "WavFormatError";
    this.code = code;
  }
}

export interface WavFormat {
  sampleRate: number;
  channels: number;
  bitDepth: number;
  sampleFormat: "int" | "float";
  /** e.g. "PCM 24-bit", "float 32-bit" */
  formatName: string;
  frames: number;
  extensible: boolean;
}

export interface WavReader {
  readonly format: WavFormat;
  /** Reads up to maxFrames frames into channels[ch][0..n); returns n, 0 at the end. */
  read(channels: Float64Array[], maxFrames: number): Promise<number>;
  /** Moves past up to `frames` frames without decoding them (a pre-rolled region starts later in the file); returns how many. */
  skip(frames: number): number;
  close(): Promise<void>;
}

export const MIN_SAMPLE_RATE = 44100;
export const MAX_SAMPLE_RATE = 192000;
const READ_BLOCK_BYTES = 384 * 1024;
/** The first read of the header region: room for any ordinary header. */
export const HEADER_FIRST_READ_BYTES = 64 * 1024;
/** Each further read, past a large chunk. */
export const HEADER_WINDOW_BYTES = 1024 * 1024;
/** Reads while looking for fmt and data (the first; one past a large chunk; one past a data chunk followed by fmt). */
export const MAX_HEADER_READS = 4;
/** Chunks walked while looking for fmt and data. */
export const MAX_HEADER_CHUNKS = 512;
const TAG_PCM = 0x0001;
const TAG_FLOAT = 0x0003;
const TAG_EXTENSIBLE = 0xfffe;

// Names for the format tags people actually meet, so the error says what the file is.
const CODEC_NAMES: Record<number, string> = {
  0x0002: "Microsoft ADPCM",
  0x0006: "A-law",
  0x0007: "µ-law",
  0x0011: "IMA ADPCM",
  0x0031: "GSM 6.10",
  0x0050: "MPEG audio",
  0x0055: "MPEG Layer 3",
  0x00ff: "AAC",
  0x0161: "Windows Media Audio",
  0x2000: "AC-3",
  0xf1ac: "FLAC",
};

interface ParsedHeader {
  format: WavFormat;
  dataOffset: number;
  blockAlign: number;
}

async function readAt(fh: FileHandle, position: number, length: number): Promise<Buffer> {
  const buf = Buffer.alloc(length);
  let got = 0;
  while (got < length) {
    const { bytesRead } = await fh.read(buf, got, length - got, position + got);
    if (bytesRead === 0) break;
    got += bytesRead;
  }
  return got === length ? buf : buf.subarray(0, got);
}

function describeTag(tag: number): string {
  const hex = `0x${tag.toString(16).padStart(4, "0")}`;
  return CODEC_NAMES[tag] ? `${CODEC_NAMES[tag]} (format tag ${hex})` : `format tag ${hex}`;
}

/** Where the header's bytes come from: a file, or memory (tests, the fuzzer). */
interface ByteSource {
  size: number;
  read(position: number, length: number): Promise<Uint8Array>;
}

function fileSource(fh: FileHandle, size: number): ByteSource {
  return { size, read: (position, length) => readAt(fh, position, length) };
}

function memorySource(bytes: Uint8Array): ByteSource {
  return { size: bytes.length, read: async (position, length) => bytes.subarray(position, Math.min(bytes.length, position + length)) };
}

const tooLong = (why: string) => new WavFormatError("header-too-long", `${why} before the audio: not a WAV file Tidemark reads`);

async function parseHeader(fh: FileHandle): Promise<ParsedHeader> {
  return parseHeaderFrom(fileSource(fh, (await fh.stat()).size));
}

async function parseHeaderFrom(source: ByteSource): Promise<ParsedHeader> {
  const fileSize = source.size;
  let windowStart = 0;
  let window = Buffer.from(await source.read(0, Math.min(fileSize, HEADER_FIRST_READ_BYTES)));
  let reads = 1;
  // Bytes of the header region, from the window when they are in it, else from one more window read.
  const bytesAt = async (position: number, length: number): Promise<Buffer> => {
    if (position < windowStart || position + length > windowStart + window.length) {
      if (position + length > windowStart + window.length && windowStart + window.length >= fileSize) return window.subarray(position - windowStart);
      reads += 1;
      if (reads > MAX_HEADER_READS) throw tooLong("chunks spread too far");
      windowStart = position;
      window = Buffer.from(await source.read(position, Math.min(fileSize - position, HEADER_WINDOW_BYTES)));
    }
    return window.subarray(position - windowStart, position - windowStart + length);
  };
  const riff = await bytesAt(0, 12);
  if (riff.length < 12 || riff.toString("latin1", 0, 4) !== "RIFF" || riff.toString("latin1", 8, 12) !== "WAVE") {
    if (riff.length >= 4 && riff.toString("latin1", 0, 4) === "RF64") {
      throw new WavFormatError("unsupported-format", "RF64 (WAV larger than 4 GB) is not supported");
    }
    throw new WavFormatError("not-riff", "not a WAV file (no RIFF/WAVE header)");
  }

  let pos = 12;
  let chunks = 0;
  let fmt: Buffer | null = null;
  let data: { offset: number; size: number } | null = null;
  while (pos + 8 <= fileSize && (!fmt || !data)) {
    chunks += 1;
    if (chunks > MAX_HEADER_CHUNKS) throw tooLong(`more than ${MAX_HEADER_CHUNKS} chunks`);
    const head = await bytesAt(pos, 8);
    if (head.length < 8) break;
    const id = head.toString("latin1", 0, 4);
    const size = head.readUInt32LE(4);
    const body = pos + 8;
    if (id === "fmt ") {
      if (size < 16) throw new WavFormatError("truncated", `fmt chunk is ${size} bytes, at least 16 expected`);
      // Copied: the window is replaced when a later read moves it.
      fmt = Buffer.from(await bytesAt(body, Math.min(size, 64, fileSize - body)));
      if (fmt.length < Math.min(size, 64)) throw new WavFormatError("truncated", "file ends inside the fmt chunk");
    } else if (id === "data") {
      const available = fileSize - body;
      // 0 and 0xFFFFFFFF are placeholders left by writers that stream without patching.
      if (size === 0 || size === 0xffffffff) {
        data = { offset: body, size: available };
      } else if (size > available) {
        throw new WavFormatError(
          "bad-size",
          `data chunk claims ${size} bytes but only ${available} follow it in the file (truncated or bad header)`,
        );
      } else {
        data = { offset: body, size };
      }
      if (!fmt) {
        // fmt after data is legal; keep scanning past the data.
        pos = body + data.size + (data.size & 1);
        continue;
      }
      break;
    }
    pos = body + size + (size & 1); // chunks are padded to even sizes
  }
  if (!fmt) throw new WavFormatError("truncated", "no fmt chunk before the end of the file");
  if (!data) throw new WavFormatError("truncated", "no data chunk before the end of the file");

  let tag = fmt.readUInt16LE(0);
  const channels = fmt.readUInt16LE(2);
  const sampleRate = fmt.readUInt32LE(4);
  const blockAlign = fmt.readUInt16LE(12);
  const bitDepth = fmt.readUInt16LE(14);
  const extensible = tag === TAG_EXTENSIBLE;
  if (extensible) {
    if (fmt.length < 40) throw new WavFormatError("truncated", "WAVE_FORMAT_EXTENSIBLE fmt chunk shorter than 40 bytes");
    tag = fmt.readUInt16LE(24); // first two bytes of the sub-format GUID
  }
  if (tag !== TAG_PCM && tag !== TAG_FLOAT) {
    throw new WavFormatError("unsupported-codec", `unsupported codec: ${describeTag(tag)}; only PCM and float WAV are read`);
  }
  const sampleFormat = tag === TAG_FLOAT ? "float" : "int";
  if (channels === 0) throw new WavFormatError("unsupported-format", "fmt chunk declares 0 channels");
  if (channels > 2) throw new WavFormatError("too-many-channels", `${channels} channels: multichannel is not supported yet`);
  const okDepth = sampleFormat === "int" ? [16, 24, 32].includes(bitDepth) : [32, 64].includes(bitDepth);
  if (!okDepth) throw new WavFormatError("unsupported-format", `${sampleFormat === "int" ? "PCM" : "float"} ${bitDepth}-bit is not supported`);
  if (blockAlign !== (channels * bitDepth) / 8) {
    throw new WavFormatError("unsupported-format", `block align ${blockAlign} does not match ${channels} × ${bitDepth}-bit`);
  }
  if (sampleRate < MIN_SAMPLE_RATE || sampleRate > MAX_SAMPLE_RATE) {
    throw new WavFormatError("unsupported-format", `sample rate ${sampleRate} Hz is outside 44.1–192 kHz`);
  }
  const frames = Math.floor(data.size / blockAlign);
  if (frames === 0) throw new WavFormatError("no-frames", "the data chunk holds no audio frames");
  return {
    format: {
      sampleRate,
      channels,
      bitDepth,
      sampleFormat,
      formatName: `${sampleFormat === "int" ? "PCM" : "float"} ${bitDepth}-bit`,
      frames,
      extensible,
    },
    dataOffset: data.offset,
    blockAlign,
  };
}

/** The format and where the audio starts, from a WAV's first bytes (a stored file's header read by range). */
export async function parseWavHeaderBytes(bytes: Uint8Array, fileSize: number): Promise<{ format: WavFormat; dataOffset: number; blockAlign: number }> {
  return parseHeaderFrom({ size: fileSize, read: async (position, length) => bytes.subarray(position, Math.min(bytes.length, position + length)) });
}

/** The format of a WAV held in memory (the fuzzer's way in; the same parser as files). */
export async function probeWavBytes(bytes: Uint8Array): Promise<WavFormat> {
  return (await parseHeaderFrom(memorySource(bytes))).format;
}

export async function probeWav(path: string): Promise<WavFormat> {
  const fh = await open(path, "r");
  try {
    return (await parseHeader(fh)).format;
  } finally {
    await fh.close();
  }
}

class StreamingWavReader implements WavReader {
  readonly format: WavFormat;
  private readonly fh: FileHandle;
  private readonly blockAlign: number;
  private position: number;
  private framesLeft: number;
  private framesRead = 0;
  private readonly bytes: Uint8Array;
  private readonly i16: Int16Array;
  private readonly i32: Int32Array;
  private readonly f32: Float32Array;
  private readonly f64: Float64Array;
  private readonly view: DataView;
  private readonly blockFrames: number;

  constructor(fh: FileHandle, header: ParsedHeader) {
    this.fh = fh;
    this.format = header.format;
    this.blockAlign = header.blockAlign;
    this.position = header.dataOffset;
    this.framesLeft = header.format.frames;
    this.blockFrames = Math.floor(READ_BLOCK_BYTES / header.blockAlign);
    // Own ArrayBuffer at offset 0, so every typed view is aligned; one spare
    // byte at the end, so a 24-bit sample can be read as four bytes.
    const ab = new ArrayBuffer(this.blockFrames * header.blockAlign + 1);
    this.view = new DataView(ab);
    this.bytes = new Uint8Array(ab);
    this.i16 = new Int16Array(ab, 0, ab.byteLength >> 1);
    this.i32 = new Int32Array(ab, 0, ab.byteLength >> 2);
    this.f32 = new Float32Array(ab, 0, ab.byteLength >> 2);
    this.f64 = new Float64Array(ab, 0, ab.byteLength >> 3);
  }

  async read(channels: Float64Array[], maxFrames: number): Promise<number> {
    const nch = this.format.channels;
    if (channels.length < nch) throw new RangeError(`need ${nch} channel buffers, got ${channels.length}`);
    for (let ch = 0; ch < nch; ch++) maxFrames = Math.min(maxFrames, channels[ch].length);
    let done = 0;
    while (done < maxFrames && this.framesLeft > 0) {
      const want = Math.min(maxFrames - done, this.framesLeft, this.blockFrames);
      const wantBytes = want * this.blockAlign;
      let got = 0;
      while (got < wantBytes) {
        const { bytesRead } = await this.fh.read(this.bytes, got, wantBytes - got, this.position + got);
        if (bytesRead === 0) break;
        got += bytesRead;
      }
      const n = Math.floor(got / this.blockAlign);
      if (n < want) {
        // The file shrank after the header was checked.
        throw new WavFormatError("truncated", `file ends after ${this.framesRead + n} of ${this.format.frames} frames`);
      }
      this.decode(channels, done, n);
      this.position += n * this.blockAlign;
      this.framesLeft -= n;
      this.framesRead += n;
      done += n;
    }
    return done;
  }

  skip(frames: number): number {
    const n = Math.max(0, Math.min(Math.floor(frames), this.framesLeft));
    this.position += n * this.blockAlign;
    this.framesLeft -= n;
    this.framesRead += n;
    return n;
  }

  private decode(channels: Float64Array[], offset: number, n: number): void {
    const nch = this.format.channels;
    const { bitDepth, sampleFormat } = this.format;
    // The first non-finite sample in frame order (channels are decoded one after the other).
    let badFrame = n;
    let badChannel = 0;
    let badValue = 0;
    for (let ch = 0; ch < nch; ch++) {
      const out = channels[ch];
      if (sampleFormat === "float") {
        const src = bitDepth === 32 ? this.f32 : this.f64;
        for (let i = 0, j = ch; i < n; i++, j += nch) {
          const v = src[j];
          if (v - v !== 0) {
            if (i < badFrame) {
              badFrame = i;
              badChannel = ch;
              badValue = v;
            }
            break;
          }
          out[offset + i] = v;
        }
      } else if (bitDepth === 16) {
        const src = this.i16;
        for (let i = 0, j = ch; i < n; i++, j += nch) out[offset + i] = src[j] * (1 / 32768);
      } else if (bitDepth === 24) {
        // Four bytes at once, little-endian; the fourth (the next sample's,
        // or the spare byte) is shifted out, the sign shifted back in.
        // Twice as fast as assembling the three bytes one by one.
        const dv = this.view;
        const stride = 3 * nch;
        for (let i = 0, j = 3 * ch; i < n; i++, j += stride) out[offset + i] = ((dv.getInt32(j, true) << 8) >> 8) * (1 / 8388608);
      } else {
        const src = this.i32;
        for (let i = 0, j = ch; i < n; i++, j += nch) out[offset + i] = src[j] * (1 / 2147483648);
      }
    }
    if (badFrame < n) {
      throw new WavFormatError("non-finite", `sample ${String(badValue)} (not a finite number) at frame ${this.framesRead + badFrame}, channel ${badChannel + 1}`);
    }
  }

  async close(): Promise<void> {
    await this.fh.close();
  }
}

export async function openWav(path: string): Promise<WavReader> {
  const fh = await open(path, "r");
  try {
    return new StreamingWavReader(fh, await parseHeader(fh));
  } catch (err) {
    await fh.close();
    throw err;
  }
}

/**
 * Reads every sample of a float file once, so a file holding NaN or an
 * infinity is refused where it arrives (the reader's "non-finite" error names
 * the first bad frame and channel). Integer files cannot hold such samples.
 */
export async function checkWavSamples(path: string): Promise<void> {
  const reader = await openWav(path);
  try {
    if (reader.format.sampleFormat !== "float") return;
    const block = 65536;
    const buffers = Array.from({ length: reader.format.channels }, () => new Float64Array(block));
    while ((await reader.read(buffers, block)) > 0);
  } finally {
    await reader.close();
  }
}
