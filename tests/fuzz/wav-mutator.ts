// A seeded mutator of WAV files for fuzzing the reader's header parser:
// valid seed files of every kind the reader takes (and a few layouts it must
// walk past), then mutations that go for what a parser trusts: chunk sizes,
// format fields, counts, lengths, order. The same seed gives the same inputs.
import { createRng } from "../../bench/signals.ts";
import { probeWavBytes, WavFormatError } from "../../dsp/io/wav-reader.ts";

function chunk(id: string, body: Buffer, declared = body.length): Buffer {
  const head = Buffer.alloc(8);
  head.write(id, 0, "latin1");
  head.writeUInt32LE(declared >>> 0, 4);
  return Buffer.concat([head, body, body.length & 1 ? Buffer.alloc(1) : Buffer.alloc(0)]);
}

function fmt(tag: number, channels: number, rate: number, bits: number, extensibleSubTag?: number): Buffer {
  const b = Buffer.alloc(extensibleSubTag === undefined ? 16 : 40);
  b.writeUInt16LE(extensibleSubTag === undefined ? tag : 0xfffe, 0);
  b.writeUInt16LE(channels, 2);
  b.writeUInt32LE(rate, 4);
  b.writeUInt32LE((rate * channels * bits) / 8, 8);
  b.writeUInt16LE((channels * bits) / 8, 12);
  b.writeUInt16LE(bits, 14);
  if (extensibleSubTag !== undefined) {
    b.writeUInt16LE(22, 16);
    b.writeUInt16LE(bits, 18);
    b.writeUInt32LE(3, 20);
    b.writeUInt16LE(extensibleSubTag, 24);
  }
  return b;
}

function riff(chunks: Buffer[]): Buffer {
  const body = Buffer.concat(chunks);
  const head = Buffer.alloc(12);
  head.write("RIFF", 0, "latin1");
  head.writeUInt32LE(body.length + 4, 4);
  head.write("WAVE", 8, "latin1");
  return Buffer.concat([head, body]);
}

const audio = (bytes: number) => Buffer.from(Array.from({ length: bytes }, (_, i) => (i * 37) & 0xff));

/** Valid files the mutations start from. */
export const SEEDS: readonly Buffer[] = [
  riff([chunk("fmt ", fmt(1, 2, 44100, 16)), chunk("data", audio(400))]),
  riff([chunk("fmt ", fmt(1, 1, 48000, 24)), chunk("data", audio(300))]),
  riff([chunk("fmt ", fmt(3, 2, 96000, 32)), chunk("data", audio(256))]),
  riff([chunk("fmt ", fmt(0, 2, 192000, 32, 1)), chunk("data", audio(256))]),
  riff([chunk("LIST", Buffer.from("INFOISFT\u0004\u0000\u0000\u0000tide")), chunk("fmt ", fmt(1, 2, 48000, 16)), chunk("bext", Buffer.alloc(602)), chunk("data", audio(200))]),
  riff([chunk("data", audio(240)), chunk("fmt ", fmt(1, 2, 48000, 16))]),
  riff([chunk("fmt ", fmt(3, 1, 44100, 64)), chunk("data", audio(160), 0xffffffff)]),
];

const INTERESTING_U32 = [0, 1, 2, 7, 8, 16, 0x7f, 0x80, 0xff, 0x100, 0xffff, 0x10000, 0x7fffffff, 0x80000000, 0xfffffffe, 0xffffffff];
const INTERESTING_U16 = [0, 1, 2, 3, 6, 8, 16, 24, 32, 64, 0x7fff, 0x8000, 0xfffe, 0xffff];
const IDS = ["fmt ", "data", "LIST", "JUNK", "RIFF", "WAVE", "\u0000\u0000\u0000\u0000"];

/** One mutated input: 1 to 4 mutations of a seed (or of two spliced seeds). */
export function createWavMutator(seed: number): () => Buffer {
  const rng = createRng(seed);
  const int = (n: number) => Math.floor(rng() * n);
  const pick = <T>(list: readonly T[]) => list[int(list.length)];
  const mutate = (input: Buffer): Buffer => {
    let b: Buffer = Buffer.from(input);
    const at = () => int(Math.max(1, b.length));
    switch (int(11)) {
      case 0: // flip a bit
        if (b.length > 0) b[at()] ^= 1 << int(8);
        break;
      case 1: // a random byte
        if (b.length > 0) b[at()] = int(256);
        break;
      case 2: // an interesting 32-bit value, often at a chunk size
        if (b.length >= 4) b.writeUInt32LE(pick(INTERESTING_U32), rng() < 0.5 ? pick([4, 16, 40, 16 + 24, 40 + 4]) % (b.length - 3) : int(b.length - 3));
        break;
      case 3: // an interesting 16-bit value in the fmt fields
        if (b.length >= 36) b.writeUInt16LE(pick(INTERESTING_U16), 20 + 2 * int(8));
        break;
      case 4: // cut short
        b = b.subarray(0, int(b.length + 1));
        break;
      case 5: // a run of empty or odd chunks before the rest
        {
          const count = pick([1, 10, 600, 5000, 100_000]);
          const filler = Buffer.alloc(count * 8, Buffer.from(`${pick(["pad ", "JUNK", "LIST"])}\0\0\0\0`, "latin1"));
          b = Buffer.concat([b.subarray(0, 12), filler, b.subarray(12)]);
        }
        break;
      case 6: // rename a chunk
        if (b.length >= 16) b.write(pick(IDS), 12 + 8 * int(Math.max(1, (b.length - 12) >> 3)), "latin1");
        break;
      case 7: // duplicate a stretch
        {
          const from = at();
          const piece = b.subarray(from, from + int(64));
          const to = at();
          b = Buffer.concat([b.subarray(0, to), piece, b.subarray(to)]);
        }
        break;
      case 8: // splice with another seed
        {
          const other = pick(SEEDS);
          b = Buffer.concat([b.subarray(0, at()), other.subarray(int(other.length))]);
        }
        break;
      case 9: // a huge declared chunk ahead of fmt
        b = Buffer.concat([b.subarray(0, 12), chunk("JUNK", Buffer.alloc(0), pick([0x100000, 0x7fffffff, 0xfffffff0])), b.subarray(12)]);
        break;
      default: // random bytes appended
        b = Buffer.concat([b, Buffer.from(Array.from({ length: int(32) }, () => int(256)))]);
    }
    return b;
  };
  return () => {
    let input = pick(SEEDS);
    const rounds = 1 + int(4);
    for (let r = 0; r < rounds; r++) input = mutate(input);
    return input;
  };
}

export type FuzzReport = { inputs: number; accepted: number; refused: Record<string, number>; slowestMs: number; slowestInput: number; crashes: { input: number; error: string }[] };

/**
 * Runs the header parser on `count` mutated inputs. Every input must be
 * accepted or refused with a WavFormatError; anything else is a crash.
 */
export async function fuzzWavReader(seed: number, count: number, onProgress?: (done: number) => void): Promise<FuzzReport> {
  const next = createWavMutator(seed);
  const report: FuzzReport = { inputs: 0, accepted: 0, refused: {}, slowestMs: 0, slowestInput: -1, crashes: [] };
  for (let i = 0; i < count; i++) {
    const input = next();
    const started = performance.now();
    try {
      const format = await probeWavBytes(input);
      if (!(format.frames > 0) || format.channels < 1 || format.channels > 2) throw new Error(`accepted an impossible format ${JSON.stringify(format)}`);
      report.accepted += 1;
    } catch (error) {
      if (error instanceof WavFormatError) report.refused[error.code] = (report.refused[error.code] ?? 0) + 1;
      else report.crashes.push({ input: i, error: error instanceof Error ? `${error.name}: ${error.message}` : String(error) });
    }
    let ms = performance.now() - started;
    // On a shared machine a pause of the process (scheduling, GC) can land on
    // any input: a slow one is timed again, and its fastest run counts. A
    // really slow input is slow every time.
    for (let retry = 0; retry < 3 && ms > 20; retry++) {
      const again = performance.now();
      await probeWavBytes(input).catch(() => undefined);
      ms = Math.min(ms, performance.now() - again);
    }
    if (ms > report.slowestMs) {
      report.slowestMs = ms;
      report.slowestInput = i;
    }
    report.inputs += 1;
    if (onProgress && (i + 1) % 100_000 === 0) onProgress(i + 1);
  }
  return report;
}
