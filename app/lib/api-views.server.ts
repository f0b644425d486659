// How the API shows a render: without storage keys or queue ids, with links
// to its traces and audio.
import type { Render } from "../models/render.server.ts";

export function renderView(render: Render) {
  const { tracesKey, output, jobId, ...rest } = render;
  return {
    ...rest,
    output: output && { sizeBytes: output.sizeBytes, sampleRateHz: output.sampleRateHz, channels: output.channels, bitDepth: output.bitDepth, sampleFormat: output.sampleFormat },
    links: {
      self: `/api/renders/${render.id}`,
      traces: tracesKey ? `/api/renders/${render.id}/traces` : null,
      audio: output ? `/api/renders/${render.id}/audio` : null,
    },
  };
}
