// How the API shows a render: without storage keys or queue ids, with links
// to its traces and audio; a mix likewise, without its storage key.
import type { Render } from "../models/render.server.ts";
import type { Mix } from "../models/mix.server.ts";

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

export function mixView(mix: Mix) {
  const { storageKey, ...rest } = mix;
  return { ...rest, links: { audio: `/api/mixes/${mix.id}/audio` } };
}
