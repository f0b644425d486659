// Album loudness: the integrated loudness (ITU-R BS.1770-4, gated across the
// whole album) and loudness range (EBU Tech 3342) of the masters played in
// running order with the silence of each gap between them, as if they were
// one file. The files are streamed through one meter in turn, the gaps fed as
// zeros, so nothing is concatenated on disk and memory stays flat. Gap
// silence counts like any silence: it falls under the −70 LUFS absolute gate.

import { openWav } from "./io/wav-reader.ts";
import { LoudnessMeter } from "./loudness/meter.ts";

export interface AlbumLoudness {
  integratedLufs: number;
  loudnessRangeLu: number;
  durationS: number;
  sampleRate: number;
  channels: number;
}

export class AlbumError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "AlbumError";
  }
}

const BLOCK_FRAMES = 65536;

/**
 * `tracks[i].gapBeforeS` is the silence before track i (the first track's is
 * used too, for a lead-in; callers pass 0). All files must share one sample
 * rate; a mono file in a stereo album plays on both channels.
 */
export async function measureAlbum(tracks: readonly { path: string; gapBeforeS: number }[]): Promise<AlbumLoudness> {
  if (tracks.length === 0) throw new AlbumError("an album needs at least one track");
  const readers = [];
  try {
    for (const t of tracks) readers.push(await openWav(t.path));
    const sampleRate = readers[0].format.sampleRate;
    if (readers.some((r) => r.format.sampleRate !== sampleRate)) {
      throw new AlbumError(`the masters have different sample rates (${[...new Set(readers.map((r) => r.format.sampleRate))].join(", ")} Hz)`);
    }
    const channels = Math.min(2, Math.max(...readers.map((r) => r.format.channels)));
    const meter = new LoudnessMeter(sampleRate, channels, { truePeak: false });
    const bufs = Array.from({ length: Math.max(channels, ...readers.map((r) => r.format.channels)) }, () => new Float64Array(BLOCK_FRAMES));
    const zeros = Array.from({ length: channels }, () => new Float64Array(BLOCK_FRAMES));
    let frames = 0;
    for (let i = 0; i < tracks.length; i++) {
      for (let gap = Math.round(Math.max(0, tracks[i].gapBeforeS) * sampleRate); gap > 0; ) {
        const n = Math.min(gap, BLOCK_FRAMES);
        meter.process(zeros, n);
        gap -= n;
        frames += n;
      }
      const reader = readers[i];
      for (;;) {
        const n = await reader.read(bufs, BLOCK_FRAMES);
        if (n === 0) break;
        // Mono in a stereo album: the same signal on both channels.
        const feed = reader.format.channels === 1 && channels === 2 ? [bufs[0], bufs[0]] : bufs.slice(0, channels);
        meter.process(feed, n);
        frames += n;
      }
    }
    const r = meter.result();
    return { integratedLufs: r.integratedLufs, loudnessRangeLu: r.loudnessRangeLu, durationS: frames / sampleRate, sampleRate, channels };
  } finally {
    for (const r of readers) await r.close();
  }
}
