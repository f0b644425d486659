// Puts a `bext` chunk into an existing WAV file (RIFF or RF64) and reads it
// back, without loading the audio: the file is walked chunk by chunk, copied
// through a temporary file beside it with the new chunk placed just before
// `data` (any old `bext` dropped), and renamed over the original. Sizes are
// fixed up: the RIFF size, or for RF64 the riff size held in `ds64`.

import { open, rename, rm } from "node:fs/promises";
import type { FileHandle } from "node:fs/promises";
import { buildBextChunk, parseBextPayload } from "./bext.ts";
import type { Bext, ParsedBext } from "./bext.ts";

interface ChunkEntry {
  id: string;
  /** Offset of the chunk header in the file. */
  offset: number;
  /** Payload size (for RF64 `data`, the 64-bit size from ds64). */
  size: number;
}

interface WavLayout {
  form: "RIFF" | "RF64";
  chunks: ChunkEntry[];
}

const COPY_BUFFER_BYTES = 1 << 20;

async function readExactly(file: FileHandle, length: number, position: number): Promise<Buffer> {
  const buffer = Buffer.alloc(length);
  const { bytesRead } = await file.read(buffer, 0, length, position);
  if (bytesRead !== length) throw new Error(`WAV file ends early (wanted ${length} bytes at ${position})`);
  return buffer;
}

async function readLayout(file: FileHandle): Promise<WavLayout> {
  const fileBytes = (await file.stat()).size;
  const header = await readExactly(file, 12, 0);
  const form = header.toString("latin1", 0, 4);
  if ((form !== "RIFF" && form !== "RF64") || header.toString("latin1", 8, 12) !== "WAVE") {
    throw new Error("not a WAV file (RIFF/RF64 WAVE header missing)");
  }
  const chunks: ChunkEntry[] = [];
  let rf64DataSize: number | null = null;
  let offset = 12;
  while (offset + 8 <= fileBytes) {
    const chunkHeader = await readExactly(file, 8, offset);
    const id = chunkHeader.toString("latin1", 0, 4);
    let size = chunkHeader.readUInt32LE(4);
    if (id === "ds64") {
      const ds64 = await readExactly(file, 16, offset + 8);
      rf64DataSize = Number(ds64.readBigUInt64LE(8));
    }
    if (id === "data" && form === "RF64" && size === 0xffffffff) {
      if (rf64DataSize === null) throw new Error("RF64 file has no ds64 chunk before data");
      size = rf64DataSize;
    }
    if (offset + 8 + size > fileBytes) throw new Error(`WAV chunk "${id}" runs past the end of the file`);
    chunks.push({ id, offset, size });
    offset += 8 + size + (size % 2);
  }
  if (!chunks.some((c) => c.id === "data")) throw new Error("WAV file has no data chunk");
  return { form, chunks };
}

async function copyRange(from: FileHandle, to: FileHandle, start: number, length: number, toPosition: number): Promise<void> {
  const buffer = Buffer.alloc(Math.min(COPY_BUFFER_BYTES, Math.max(length, 1)));
  let done = 0;
  while (done < length) {
    const n = Math.min(buffer.length, length - done);
    const { bytesRead } = await from.read(buffer, 0, n, start + done);
    if (bytesRead !== n) throw new Error("WAV file changed while it was being copied");
    await to.write(buffer, 0, n, toPosition + done);
    done += n;
  }
}

/** Writes (or replaces) the bext chunk of the WAV file at `path`, in place. */
export async function writeBextIntoWav(path: string, bext: Bext): Promise<void> {
  const bextChunk = buildBextChunk(bext); // validates before any file is touched
  const tempPath = `${path}.bext-${process.pid}-${Date.now()}.tmp`;
  const source = await open(path, "r");
  let target: FileHandle | null = null;
  try {
    const { form, chunks } = await readLayout(source);
    target = await open(tempPath, "wx");
    let position = 12;
    let ds64Position: number | null = null;
    for (const chunk of chunks) {
      if (chunk.id === "bext") continue;
      if (chunk.id === "data") {
        await target.write(bextChunk, 0, bextChunk.length, position);
        position += bextChunk.length;
      }
      if (chunk.id === "ds64") ds64Position = position;
      const stored = 8 + chunk.size + (chunk.size % 2);
      // A final odd-sized chunk may lack its pad byte; copy what is there and pad.
      await copyRange(source, target, chunk.offset, 8 + chunk.size, position);
      if (chunk.size % 2) await target.write(Buffer.alloc(1), 0, 1, position + 8 + chunk.size);
      position += stored;
    }
    const riffSize = position - 8;
    const header = Buffer.alloc(12);
    header.write(form, 0, "latin1");
    header.write("WAVE", 8, "latin1");
    if (form === "RIFF") {
      if (riffSize > 0xffffffff) throw new Error("WAV file would exceed 4 GiB; write it as RF64");
      header.writeUInt32LE(riffSize, 4);
    } else {
      header.writeUInt32LE(0xffffffff, 4);
      if (ds64Position === null) throw new Error("RF64 file has no ds64 chunk");
      const size = Buffer.alloc(8);
      size.writeBigUInt64LE(BigInt(riffSize));
      await target.write(size, 0, 8, ds64Position + 8);
    }
    await target.write(header, 0, 12, 0);
    await target.sync();
    await target.close();
    target = null;
    await source.close();
    await rename(tempPath, path);
  } catch (error) {
    await target?.close().catch(() => {});
    await source.close().catch(() => {});
    await rm(tempPath, { force: true });
    throw error;
  }
}

/** The bext chunk of the WAV file at `path`, or null when it has none. */
export async function readBextFromWav(path: string): Promise<ParsedBext | null> {
  const file = await open(path, "r");
  try {
    const { chunks } = await readLayout(file);
    const chunk = chunks.find((c) => c.id === "bext");
    if (!chunk) return null;
    const payload = await readExactly(file, chunk.size, chunk.offset + 8);
    return parseBextPayload(new Uint8Array(payload.buffer, payload.byteOffset, payload.byteLength));
  } finally {
    await file.close();
  }
}
