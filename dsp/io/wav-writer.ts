// Streaming WAV writer: 16/24/32-bit integer PCM or 32-bit float, optionally
// WAVE_FORMAT_EXTENSIBLE. No dither here: integers are rounded and clipped.
// Sizes in the header are patched on close. Writes to the path given.

import { type FileHandle, open } from "node:fs/promises";

export interface WavWriterOptions {
  sampleRate: number;
  channels: number;
  bitDepth: 16 | 24 | 32;
  float: boolean;
  /** Write a WAVE_FORMAT_EXTENSIBLE fmt chunk (default false). */
  extensible?: boolean;
}

export interface WavWriter {
  write(channels: Float64Array[], frames: number): Promise<void>;
  close(): Promise<void>;
  readonly framesWritten: number;
}

const WRITE_BLOCK_BYTES = 384 * 1024;
const MAX_DATA_BYTES = 0xffffffff - 1024;

function buildHeader(o: WavWriterOptions): { header: Buffer; dataSizeAt: number; factAt: number } {
  const bytesPerSample = o.bitDepth / 8;
  const blockAlign = bytesPerSample * o.channels;
  const tag = o.float ? 3 : 1;
  const fmtSize = o.extensible ? 40 : o.float ? 18 : 16;
  const parts: Buffer[] = [];
  const riff = Buffer.alloc(12);
  riff.write("RIFF", 0, "latin1");
  riff.write("WAVE", 8, "latin1");
  parts.push(riff);
  const fmt = Buffer.alloc(8 + fmtSize);
  fmt.write("fmt ", 0, "latin1");
  fmt.writeUInt32LE(fmtSize, 4);
  fmt.writeUInt16LE(o.extensible ? 0xfffe : tag, 8);
  fmt.writeUInt16LE(o.channels, 10);
  fmt.writeUInt32LE(o.sampleRate, 12);
  fmt.writeUInt32LE(o.sampleRate * blockAlign, 16);
  fmt.writeUInt16LE(blockAlign, 20);
  fmt.writeUInt16LE(o.bitDepth, 22);
  if (fmtSize >= 18) fmt.writeUInt16LE(fmtSize - 18, 24); // cbSize
  if (o.extensible) {
    fmt.writeUInt16LE(o.bitDepth, 26); // valid bits
    fmt.writeUInt32LE(o.channels === 1 ? 0x4 : 0x3, 28); // front centre / front left + right
    // Sub-format GUID {0000000X-0000-0010-8000-00AA00389B71}
    Buffer.from([tag, 0, 0, 0, 0, 0, 0x10, 0, 0x80, 0, 0, 0xaa, 0, 0x38, 0x9b, 0x71]).copy(fmt, 32);
  }
  parts.push(fmt);
  let factAt = -1;
  if (o.float || o.extensible) {
    // Non-PCM formats carry a fact chunk with the frame count.
    const fact = Buffer.alloc(12);
    fact.write("fact", 0, "latin1");
    fact.writeUInt32LE(4, 4);
    factAt = 12 + fmt.length + 8;
    parts.push(fact);
  }
  const data = Buffer.alloc(8);
  data.write("data", 0, "latin1");
  parts.push(data);
  const header = Buffer.concat(parts);
  return { header, dataSizeAt: header.length - 4, factAt };
}

class StreamingWavWriter implements WavWriter {
  framesWritten = 0;
  private readonly fh: FileHandle;
  private readonly o: WavWriterOptions;
  private readonly header: ReturnType<typeof buildHeader>;
  private readonly blockAlign: number;
  private readonly bufFrames: number;
  private readonly bytes: Uint8Array;
  private readonly i16: Int16Array;
  private readonly i32: Int32Array;
  private readonly f32: Float32Array;
  private filled = 0; // frames in the buffer
  private position: number;
  private closed = false;

  constructor(fh: FileHandle, o: WavWriterOptions, header: ReturnType<typeof buildHeader>) {
    this.fh = fh;
    this.o = o;
    this.header = header;
    this.position = header.header.length;
    this.blockAlign = (o.bitDepth / 8) * o.channels;
    this.bufFrames = Math.floor(WRITE_BLOCK_BYTES / this.blockAlign);
    const ab = new ArrayBuffer(this.bufFrames * this.blockAlign);
    this.bytes = new Uint8Array(ab);
    this.i16 = new Int16Array(ab, 0, ab.byteLength >> 1);
    this.i32 = new Int32Array(ab, 0, ab.byteLength >> 2);
    this.f32 = new Float32Array(ab, 0, ab.byteLength >> 2);
  }

  async write(channels: Float64Array[], frames: number): Promise<void> {
    if (this.closed) throw new Error("WAV writer is closed");
    if (channels.length < this.o.channels) throw new RangeError(`need ${this.o.channels} channel buffers, got ${channels.length}`);
    if ((this.framesWritten + frames) * this.blockAlign > MAX_DATA_BYTES) throw new RangeError("WAV data would exceed 4 GB");
    let done = 0;
    while (done < frames) {
      const n = Math.min(frames - done, this.bufFrames - this.filled);
      this.encode(channels, done, n);
      this.filled += n;
      done += n;
      if (this.filled === this.bufFrames) await this.flush();
    }
    this.framesWritten += frames;
  }

  private encode(channels: Float64Array[], offset: number, n: number): void {
    const nch = this.o.channels;
    const base = this.filled * nch;
    for (let ch = 0; ch < nch; ch++) {
      const src = channels[ch];
      if (this.o.float) {
        const dst = this.f32;
        for (let i = 0, j = base + ch; i < n; i++, j += nch) dst[j] = src[offset + i];
      } else if (this.o.bitDepth === 16) {
        const dst = this.i16;
        for (let i = 0, j = base + ch; i < n; i++, j += nch) {
          let v = Math.round(src[offset + i] * 32768);
          v = v > 32767 ? 32767 : v < -32768 ? -32768 : v;
          dst[j] = v;
        }
      } else if (this.o.bitDepth === 24) {
        const b = this.bytes;
        const stride = 3 * nch;
        for (let i = 0, j = 3 * (base + ch); i < n; i++, j += stride) {
          let v = Math.round(src[offset + i] * 8388608);
          v = v > 8388607 ? 8388607 : v < -8388608 ? -8388608 : v;
          b[j] = v & 0xff;
          b[j + 1] = (v >> 8) & 0xff;
          b[j + 2] = (v >> 16) & 0xff;
        }
      } else {
        const dst = this.i32;
        for (let i = 0, j = base + ch; i < n; i++, j += nch) {
          let v = Math.round(src[offset + i] * 2147483648);
          v = v > 2147483647 ? 2147483647 : v < -2147483648 ? -2147483648 : v;
          dst[j] = v;
        }
      }
    }
  }

  private async flush(): Promise<void> {
    const len = this.filled * this.blockAlign;
    let off = 0;
    while (off < len) {
      const { bytesWritten } = await this.fh.write(this.bytes, off, len - off, this.position + off);
      off += bytesWritten;
    }
    this.position += len;
    this.filled = 0;
  }

  async close(): Promise<void> {
    if (this.closed) return;
    this.closed = true;
    try {
      await this.flush();
      const dataBytes = this.framesWritten * this.blockAlign;
      if (dataBytes & 1) {
        await this.fh.write(Buffer.alloc(1), 0, 1, this.position); // pad byte, not counted in the data size
      }
      const patch = Buffer.alloc(4);
      const riffSize = this.header.header.length - 8 + dataBytes + (dataBytes & 1);
      patch.writeUInt32LE(riffSize, 0);
      await this.fh.write(patch, 0, 4, 4);
      patch.writeUInt32LE(dataBytes, 0);
      await this.fh.write(patch, 0, 4, this.header.dataSizeAt);
      if (this.header.factAt >= 0) {
        patch.writeUInt32LE(this.framesWritten, 0);
        await this.fh.write(patch, 0, 4, this.header.factAt);
      }
    } finally {
      await this.fh.close();
    }
  }
}

export async function createWavWriter(path: string, options: WavWriterOptions): Promise<WavWriter> {
  const { sampleRate, channels, bitDepth, float } = options;
  if (!(channels === 1 || channels === 2)) throw new RangeError(`channels must be 1 or 2, got ${channels}`);
  if (![16, 24, 32].includes(bitDepth)) throw new RangeError(`bitDepth must be 16, 24 or 32, got ${bitDepth}`);
  if (float && bitDepth !== 32) throw new RangeError("float WAV is written as 32-bit only");
  if (!(Number.isInteger(sampleRate) && sampleRate > 0)) throw new RangeError(`bad sample rate ${sampleRate}`);
  const header = buildHeader(options);
  const fh = await open(path, "w");
  try {
    await fh.write(header.header, 0, header.header.length, 0);
  } catch (err) {
    await fh.close();
    throw err;
  }
  return new StreamingWavWriter(fh, options, header);
}
