// The one rule for who may see a render and who may take its file away, used
// by the render page and its download, the players' audio, the track page's
// list and the JSON API:
//
// - Staff (owner, engineer) of the render's studio: every render.
// - A client member of the release's client: a render only once it was sent to
//   them for review (work in progress stays in the studio). Sent renders are
//   finished ones, so a client never sees a queued or failed render.
// - The files that are the product — a print's WAV as a download and the
//   release's deliveries (the package) — open to a client only once the
//   release's invoice is paid. A preview's file stays open. In the players a
//   client hears a sent print of an unpaid release only as its first
//   UNPAID_STRETCH_S seconds (app/lib/render-audio.server.ts): enough to
//   review, never the whole print.
//
// Callers have already checked that the viewer may see the release at all
// (requireReleaseAccess / releaseFor); a render this rule hides answers 404,
// a locked file 403 with FINALS_LOCKED_MESSAGE.
import type { Knex } from "knex";
import { db } from "./db.server.ts";
import { isStaff, type Role } from "./roles.ts";
import { isReleasePaid } from "../models/invoice.server.ts";
import { FINALS_LOCKED_MESSAGE } from "./billing/finals.ts";

export type RenderViewer = { studioId: string; role: Role; clientId: string | null };

export { FINALS_LOCKED_MESSAGE };

// A client member without a client sees nothing rather than everything.
const NO_CLIENT = "00000000-0000-0000-0000-000000000000";

/**
 * Narrows a query that joins renders and releases (by these aliases) to the
 * renders this viewer may see.
 */
export function whereRenderVisible<Q extends Knex.QueryBuilder>(query: Q, viewer: RenderViewer, alias: { render: string; release: string } = { render: "rd", release: "r" }): Q {
  query.where(`${alias.release}.studio_id`, viewer.studioId);
  if (!isStaff(viewer.role)) {
    query
      .where(`${alias.release}.client_id`, viewer.clientId ?? NO_CLIENT)
      .whereExists(db("review_requests as vis_rq").whereRaw(`vis_rq.render_id = ${alias.render}.id`));
  }
  return query;
}

/** Renders (rd) with their mix (m), track (t) and release (r), ready for whereRenderVisible. */
export function rendersWithRelease(): Knex.QueryBuilder {
  return db("renders as rd").join("mixes as m", "m.id", "rd.mix_id").join("tracks as t", "t.id", "m.track_id").join("releases as r", "r.id", "t.release_id");
}

/** Whether this viewer may see this render (page, JSON, traces, listening). */
export async function mayViewRender(viewer: RenderViewer, renderId: string): Promise<boolean> {
  return (await whereRenderVisible(rendersWithRelease().where("rd.id", renderId), viewer).first("rd.id")) !== undefined;
}

/** Whether the release's final files (deliveries, the package) are open to this viewer. */
export async function finalsOpenFor(viewer: Pick<RenderViewer, "role">, releaseId: string): Promise<boolean> {
  return isStaff(viewer.role) || isReleasePaid(releaseId);
}

/**
 * Whether this viewer may take a visible render's file away: a preview's
 * always, a print's once the finals are open.
 */
export async function mayDownloadRender(viewer: Pick<RenderViewer, "role">, render: { kind: "preview" | "print" }, releaseId: string): Promise<boolean> {
  return render.kind === "preview" || finalsOpenFor(viewer, releaseId);
}

/** How much of a print a client hears in the players before the invoice is paid (a preview's length). */
export const UNPAID_STRETCH_S = 30;

/** Whether a visible render is heard whole, or only as its first UNPAID_STRETCH_S seconds. */
export async function listeningFormFor(viewer: Pick<RenderViewer, "role">, render: { kind: "preview" | "print" }, releaseId: string): Promise<"whole" | "stretch"> {
  return (await mayDownloadRender(viewer, render, releaseId)) ? "whole" : "stretch";
}

/** The 403 for a locked final file (the API answers apiError(403, FINALS_LOCKED_MESSAGE)). */
export function finalsLocked(): Response {
  return new Response(FINALS_LOCKED_MESSAGE, { status: 403, headers: { "Content-Type": "text/plain; charset=utf-8" } });
}
