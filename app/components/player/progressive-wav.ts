// Progressive loading of the A/B player's two WAV sources, so playback can
// start long before a long file has arrived.
//
// The Web Audio API decodes whole files only (decodeAudioData), and a 4-minute
// 24-bit mix is about 70 MB. Instead of fetching and decoding it whole before
// the first sound:
//   1. A ranged request for the first 64 KiB of each file gives its header:
//      the format chunk and where the samples start. Both sources' durations
//      then give the span they share on the mix's time axis (a preview plays
//      only its region, so of its mix only that stretch is ever needed).
//   2. A ranged request for the first FIRST_SEGMENT_S seconds of the span is
//      wrapped in a WAV header of its own (the file's format chunk, a data
//      chunk of that length) and decoded: the player is ready with those.
//   3. The rest of the span arrives in a second ranged request; the whole
//      span is then decoded once more and swapped into the engine at the same
//      clock position (ab-engine.ts, replaceBuffer).
// Every byte is fetched once, and only the span's bytes at all. The routes
// that serve the audio answer byte ranges (app/lib/http-range.server.ts); a
// server that ignores Range (200 with the whole file) still works: the whole
// file is then used at once.
//
// Fetch and decode are passed in, so Node tests can drive this without a browser.
import type { BufferLike, Region, SourceId } from "./ab-engine.ts";

export const HEADER_PROBE_BYTES = 64 * 1024;
/** What is decoded before play may begin; the rest follows (common practice for streamed starts: a few to a few tens of seconds). */
export const FIRST_SEGMENT_S = 12;
/** A span at most this much longer than the first segment is fetched in one go: a second round trip would not pay. */
const ONE_GO_SLACK = 1.5;

export type WavLayout = {
  /** The whole `fmt ` chunk (id, size and body), copied into each segment's header. */
  fmtChunk: Uint8Array;
  sampleRate: number;
  channels: number;
  blockAlign: number;
  /** Byte offset of the first sample. */
  dataOffset: number;
  frames: number;
  /** 64-bit float samples: browsers' decoders refuse them, so segments carry them as 32-bit float (wavFromFrames). */
  float64: boolean;
};

const ascii = (bytes: Uint8Array, at: number) => String.fromCharCode(bytes[at], bytes[at + 1], bytes[at + 2], bytes[at + 3]);

/**
 * The layout of a WAV from its first bytes and its total size; null when the
 * bytes are not a RIFF/WAVE header or do not reach the data chunk's start
 * (a format chunk after the data, legal but rare, is then not found either).
 */
export function parseWavLayout(head: Uint8Array, totalBytes: number): WavLayout | null {
  if (head.length < 12 || ascii(head, 0) !== "RIFF" || ascii(head, 8) !== "WAVE") return null;
  const view = new DataView(head.buffer, head.byteOffset, head.byteLength);
  let pos = 12;
  let fmt: WavLayout["fmtChunk"] | null = null;
  while (pos + 8 <= head.length) {
    const id = ascii(head, pos);
    const size = view.getUint32(pos + 4, true);
    if (id === "fmt ") {
      if (size < 16 || pos + 8 + size > head.length) return null;
      fmt = head.slice(pos, pos + 8 + size);
    } else if (id === "data") {
      if (!fmt) return null;
      const fmtView = new DataView(fmt.buffer, fmt.byteOffset, fmt.byteLength);
      const formatTag = fmtView.getUint16(8, true);
      const channels = fmtView.getUint16(10, true);
      const sampleRate = fmtView.getUint32(12, true);
      const blockAlign = fmtView.getUint16(20, true);
      const bitsPerSample = fmtView.getUint16(22, true);
      if (!channels || !sampleRate || !blockAlign) return null;
      // WAVE_FORMAT_EXTENSIBLE (0xFFFE) names the real format in the first two bytes of its sub-format GUID.
      const code = formatTag === 0xfffe && fmt.length >= 8 + 26 ? fmtView.getUint16(8 + 24, true) : formatTag;
      const float64 = code === 3 && bitsPerSample === 64;
      const dataOffset = pos + 8;
      // 0 and 0xFFFFFFFF are placeholders of writers that stream without patching: the data runs to the end.
      const declared = size === 0 || size === 0xffffffff ? totalBytes - dataOffset : size;
      const dataBytes = Math.max(0, Math.min(declared, totalBytes - dataOffset));
      return { fmtChunk: fmt, sampleRate, channels, blockAlign, dataOffset, frames: Math.floor(dataBytes / blockAlign), float64 };
    }
    pos += 8 + size + (size & 1); // chunks are padded to even sizes
  }
  return null;
}

/** A plain 32-bit IEEE float format chunk for this rate and channel count. */
function float32FmtChunk(sampleRate: number, channels: number): Uint8Array {
  const chunk = new Uint8Array(8 + 16);
  const view = new DataView(chunk.buffer);
  [..."fmt "].forEach((c, i) => (chunk[i] = c.charCodeAt(0)));
  view.setUint32(4, 16, true);
  view.setUint16(8, 3, true); // WAVE_FORMAT_IEEE_FLOAT
  view.setUint16(10, channels, true);
  view.setUint32(12, sampleRate, true);
  view.setUint32(16, sampleRate * channels * 4, true);
  view.setUint16(20, channels * 4, true);
  view.setUint16(22, 32, true);
  return chunk;
}

/** 64-bit float frames as 32-bit float (what a player needs: 24 bits of mantissa are far below audibility). */
function float64ToFloat32(pcm: Uint8Array, frames: number, channels: number): Uint8Array {
  const values = frames * channels;
  const out = new Uint8Array(values * 4);
  const from = new DataView(pcm.buffer, pcm.byteOffset, values * 8);
  const to = new DataView(out.buffer);
  for (let i = 0; i < values; i++) to.setFloat32(i * 4, from.getFloat64(i * 8, true), true);
  return out;
}

/**
 * A complete WAV file of `pcm` (whole frames of the layout's format): RIFF,
 * the original format chunk, one data chunk. 64-bit float, which browsers
 * do not decode, goes out as 32-bit float.
 */
export function wavFromFrames(layout: WavLayout, pcm: Uint8Array): ArrayBuffer {
  if (layout.float64) {
    const frames = Math.floor(pcm.length / layout.blockAlign);
    const converted = float64ToFloat32(pcm, frames, layout.channels);
    const as32: WavLayout = { ...layout, fmtChunk: float32FmtChunk(layout.sampleRate, layout.channels), blockAlign: layout.channels * 4, float64: false };
    return wavFromFrames(as32, converted);
  }
  const bytes = pcm.length - (pcm.length % layout.blockAlign);
  const out = new Uint8Array(12 + layout.fmtChunk.length + 8 + bytes);
  const view = new DataView(out.buffer);
  const put = (at: number, text: string) => [...text].forEach((c, i) => (out[at + i] = c.charCodeAt(0)));
  put(0, "RIFF");
  view.setUint32(4, out.length - 8, true);
  put(8, "WAVE");
  out.set(layout.fmtChunk, 12);
  const data = 12 + layout.fmtChunk.length;
  put(data, "data");
  view.setUint32(data + 4, bytes, true);
  out.set(pcm.subarray(0, bytes), data + 8);
  return out.buffer;
}

export type Io = {
  fetch: (url: string, init: RequestInit) => Promise<Response>;
  decode: (wav: ArrayBuffer) => Promise<BufferLike>;
  signal?: AbortSignal;
};

export type Probe = { url: string; layout: WavLayout; totalBytes: number; whole: Uint8Array | null };

export async function probe(url: string, io: Io): Promise<Probe> {
  const response = await io.fetch(url, { headers: { Range: `bytes=0-${HEADER_PROBE_BYTES - 1}` }, credentials: "same-origin", signal: io.signal });
  if (!response.ok) throw new Error(`could not load the audio (${response.status})`);
  const bytes = new Uint8Array(await response.arrayBuffer());
  // 206: a part, the total after the slash of Content-Range. 200: the server sent the whole file.
  const total = response.status === 206 ? Number(/\/(\d+)\s*$/.exec(response.headers.get("Content-Range") ?? "")?.[1]) : bytes.length;
  if (!Number.isFinite(total) || total <= 0) throw new Error("the audio's size is unknown");
  const layout = parseWavLayout(bytes, total);
  if (!layout) throw new Error("the audio is not a WAV file this player can read");
  return { url, layout, totalBytes: total, whole: response.status === 206 && bytes.length < total ? null : bytes };
}

export async function fetchFrames(p: Probe, startFrame: number, endFrame: number, io: Io): Promise<Uint8Array> {
  const start = p.layout.dataOffset + startFrame * p.layout.blockAlign;
  const end = p.layout.dataOffset + endFrame * p.layout.blockAlign; // exclusive
  if (end <= start) return new Uint8Array(0);
  if (p.whole) return p.whole.subarray(start, end);
  const response = await io.fetch(p.url, { headers: { Range: `bytes=${start}-${end - 1}` }, credentials: "same-origin", signal: io.signal });
  if (response.status !== 206 && response.status !== 200) throw new Error(`could not load the audio (${response.status})`);
  const bytes = new Uint8Array(await response.arrayBuffer());
  // A server that answers a range with the whole file: cut the range out of it.
  return response.status === 200 ? bytes.subarray(start, end) : bytes;
}

export type PairInput = { url: string; offsetS: number };

/** A decoded stretch of a source: its buffer, where the buffer's 0 s sits on the mix axis, and the whole source's extent. */
export type LoadedPart = { buffer: BufferLike; offsetS: number; whole: Region; complete: boolean };

export type OpenedPair = {
  span: Region;
  first: Record<SourceId, LoadedPart>;
  /** The whole span of each source, decoded; null where the first part already is. */
  rest: Record<SourceId, Promise<LoadedPart> | null>;
};

/** Opens both sources: headers, the shared span, the first seconds decoded, the rest on its way. */
export async function openPair(inputs: Record<SourceId, PairInput>, io: Io, options: { firstSegmentS?: number } = {}): Promise<OpenedPair> {
  const firstSegmentS = options.firstSegmentS ?? FIRST_SEGMENT_S;
  // One source heard alone is given as both A and B: fetched and decoded once.
  const same = inputs.A.url === inputs.B.url && inputs.A.offsetS === inputs.B.offsetS;
  const [pa, pb] = same ? await probe(inputs.A.url, io).then((p) => [p, p]) : await Promise.all([probe(inputs.A.url, io), probe(inputs.B.url, io)]);
  const probes: Record<SourceId, Probe> = { A: pa, B: pb };
  const whole = (id: SourceId): Region => ({ startS: inputs[id].offsetS, endS: inputs[id].offsetS + probes[id].layout.frames / probes[id].layout.sampleRate });
  const startS = Math.max(whole("A").startS, whole("B").startS);
  const endS = Math.min(whole("A").endS, whole("B").endS);
  if (!(endS > startS)) throw new Error("the two sources do not overlap in time");

  const plan = (id: SourceId) => {
    const { layout } = probes[id];
    const own = (s: number) => s - inputs[id].offsetS;
    const startFrame = Math.max(0, Math.min(layout.frames, Math.floor(own(startS) * layout.sampleRate)));
    const endFrame = Math.max(startFrame, Math.min(layout.frames, Math.ceil(own(endS) * layout.sampleRate)));
    const firstFrames = Math.round(firstSegmentS * layout.sampleRate);
    const oneGo = probes[id].whole !== null || endFrame - startFrame <= firstFrames * ONE_GO_SLACK;
    return { startFrame, endFrame, firstEndFrame: oneGo ? endFrame : startFrame + firstFrames };
  };
  const part = async (id: SourceId, pcm: Uint8Array, complete: boolean): Promise<LoadedPart> => {
    const { layout } = probes[id];
    const buffer = await io.decode(wavFromFrames(layout, pcm));
    return { buffer, offsetS: inputs[id].offsetS + plan(id).startFrame / layout.sampleRate, whole: whole(id), complete };
  };

  const loadFirst = async (id: SourceId) => {
    const { startFrame, firstEndFrame, endFrame } = plan(id);
    const head = await fetchFrames(probes[id], startFrame, firstEndFrame, io);
    return { head, first: await part(id, head, firstEndFrame === endFrame) };
  };
  const [a, b] = same ? await loadFirst("A").then((x) => [x, x]) : await Promise.all([loadFirst("A"), loadFirst("B")]);
  const heads = { A: a.head, B: b.head };
  const loadRest = (id: SourceId): Promise<LoadedPart> | null => {
    const { firstEndFrame, endFrame } = plan(id);
    if (firstEndFrame === endFrame) return null;
    return fetchFrames(probes[id], firstEndFrame, endFrame, io).then((tail) => {
      const all = new Uint8Array(heads[id].length + tail.length);
      all.set(heads[id]);
      all.set(tail, heads[id].length);
      return part(id, all, true);
    });
  };
  const restA = loadRest("A");
  return { span: { startS, endS }, first: { A: a.first, B: b.first }, rest: { A: restA, B: same ? restA : loadRest("B") } };
}
