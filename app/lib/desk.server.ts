// The desk's data: a chain (a track's or a template) with its revisions, the
// revision opened, the track's mix versions and the one heard, and its
// default region (the loudest stretch, as previews choose it). And what the
// desk writes: a revision of what was heard, a preview or print of it.
import { isDeepStrictEqual } from "node:util";
import { parseChain } from "../../dsp/chain/schema.ts";
import { loudestWindow } from "../../dsp/render/loudest-window.ts";
import { PREVIEW_WINDOW_S } from "../../dsp/render/render-file.ts";
import { clampRegion } from "../schemas/desk.ts";
import type { ChainPlace } from "./chain-access.server.ts";
import { isUuid } from "./ids.ts";
import { createRevision, diffParams, listRevisions, type ChainRevision } from "../models/chain.server.ts";
import { getMix, listMixVersions, type Mix } from "../models/mix.server.ts";
import { createRender, type RenderKind } from "../models/render.server.ts";
import type { EditableChain } from "../components/desk/chain-state.ts";

export type DeskMix = { id: string; version: number; label: string; durationS: number; sampleRateHz: number; channels: number; audioUrl: string; analysed: boolean };

function deskMix(m: Mix): DeskMix {
  const durationS = m.durationSeconds;
  const minutes = Math.floor(durationS / 60);
  const rest = (durationS - minutes * 60).toFixed(0).padStart(2, "0");
  return {
    id: m.id,
    version: m.version,
    label: `v${m.version} · ${m.originalName} · ${minutes}:${rest}`,
    durationS,
    sampleRateHz: m.sampleRateHz,
    channels: m.channels,
    audioUrl: `/api/mixes/${m.id}/audio`,
    analysed: m.analysisState === "done",
  };
}

/** The loudest PREVIEW_WINDOW_S of the mix by its analysis' short-term loudness (as previews), or its start while unanalysed. */
export async function defaultRegion(mixId: string, durationS: number): Promise<{ startS: number; endS: number; loudest: boolean }> {
  const mix = await getMix(mixId);
  const analysis = mix?.analysisState === "done" ? (mix.analysis as { gridMs?: unknown; shortTermLufs?: unknown } | null) : null;
  if (analysis && typeof analysis.gridMs === "number" && Array.isArray(analysis.shortTermLufs)) {
    const curve = (analysis.shortTermLufs as (number | null)[]).map((v) => (typeof v === "number" ? v : -Infinity));
    return { ...loudestWindow(curve, analysis.gridMs, durationS, PREVIEW_WINDOW_S), loudest: true };
  }
  return { ...clampRegion({ startS: 0, endS: PREVIEW_WINDOW_S }, durationS), loudest: false };
}

export async function loadDesk(chain: ChainPlace, url: URL) {
  const revisions = await listRevisions(chain.id);
  const asked = Number(url.searchParams.get("revision"));
  const opened = revisions.find((r) => r.revision === asked) ?? revisions[0];
  const pick = (name: string, fallback: number | undefined) => {
    const n = Number(url.searchParams.get(name));
    return revisions.find((r) => r.revision === n) ?? revisions.find((r) => r.revision === fallback);
  };
  const to = pick("to", revisions[0]?.revision);
  const from = pick("from", to ? to.revision - 1 : undefined);
  const diff = from && to && from.id !== to.id ? { from: from.revision, to: to.revision, before: from.params, after: to.params, changes: diffParams(from.params, to.params) } : null;

  const mixes = chain.track ? (await listMixVersions(chain.track.id)).map(deskMix) : [];
  const mixId = url.searchParams.get("mix");
  const mix = mixes.find((m) => m.id === mixId) ?? mixes[0] ?? null;
  const region = mix ? await defaultRegion(mix.id, mix.durationS) : null;
  return {
    revisions: revisions.map((r) => ({ id: r.id, revision: r.revision, authorName: r.authorName, createdAt: r.createdAt.toISOString(), params: r.params as EditableChain })),
    opened: opened ? { id: opened.id, revision: opened.revision, params: opened.params as EditableChain } : null,
    mixes,
    mix,
    region,
    diff,
  };
}

/**
 * The revision that holds exactly these parameters: the latest when it is
 * the same (as the schema reads both), else a new one. A render from the desk
 * thus never makes a revision nobody changed.
 */
export async function revisionForParams(chainId: string, params: unknown, authorId: string): Promise<{ revision: ChainRevision; created: boolean }> {
  const [latest] = await listRevisions(chainId);
  const parsed = parseChain(params);
  if (latest && parsed.ok && isDeepStrictEqual(JSON.parse(JSON.stringify(parsed.chain)), latest.params)) return { revision: latest, created: false };
  return { revision: await createRevision(chainId, params, authorId), created: true };
}

/** The mix of the chain's own track, or undefined. */
export async function mixOfTrack(trackId: string, mixId: string): Promise<Mix | undefined> {
  if (!isUuid(mixId)) return undefined;
  const mix = await getMix(mixId);
  return mix && mix.trackId === trackId ? mix : undefined;
}

export async function renderFromDesk(input: { chainRevisionId: string; mix: Mix; kind: RenderKind; region: { startS: number; endS: number } | null; userId: string }) {
  const region = input.kind === "preview" && input.region ? clampRegion(input.region, input.mix.durationSeconds) : null;
  return createRender({ mixId: input.mix.id, chainRevisionId: input.chainRevisionId, kind: input.kind, region, createdBy: input.userId });
}
