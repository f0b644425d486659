// The client's side of the demo: on a fresh start each demo client already
// has something to hear in the review room. Runs after 03_demo_audio.ts (the
// mixes, the per-track chains, the queued preview and print) and adds renders
// the worker makes within a minute, with the review steps already taken:
//
// - EP "Lowlight Weather" (the artist): "Tin Roof Morning" — version 1 sent
//   with a message and a studio comment, changes asked, version 2 (the same
//   mix at a loudness target) sent; "Slow Ferry" — a full master sent and
//   approved.
// - Single "Glasshouse Signal" (the label): its preview sent with a message
//   and a comment from the studio, waiting for the label's verdict.
//
// The steps are dated in the past, in order; renders finishing later change
// nothing (see app/lib/review/state.ts). Adds nothing to a track that already
// has review steps, so running it twice does no harm.
import type { Knex } from "knex";
import { db } from "../../app/lib/db.server.ts";
import { stopQueue } from "../../app/jobs/queue.server.ts";
import { createRender } from "../../app/models/render.server.ts";
import { DEMO_ACCOUNTS } from "./01_demo.ts";
import { DEMO_STUDIO_NAME } from "./02_templates.ts";

type TrackFacts = { trackId: string; mixId: string; revisionId: string };

async function trackFacts(knex: Knex, studioId: string, title: string): Promise<TrackFacts | undefined> {
  const row = await knex("tracks as t")
    .join("releases as r", "r.id", "t.release_id")
    .join("mixes as m", "m.track_id", "t.id")
    .join("chains as c", "c.track_id", "t.id")
    .join("chain_revisions as cr", "cr.chain_id", "c.id")
    .where({ "r.studio_id": studioId, "t.title": title })
    .whereNotExists(knex("review_requests as rq").whereRaw("rq.track_id = t.id"))
    .orderBy([{ column: "m.version", order: "desc" }, { column: "cr.revision", order: "desc" }])
    .first<{ trackId: string; mixId: string; revisionId: string } | undefined>("t.id as trackId", "m.id as mixId", "cr.id as revisionId");
  return row;
}

const daysAgo = (days: number) => new Date(Date.now() - days * 86_400_000);

export async function seedDemoReview(knex: Knex): Promise<number> {
  const studio = await knex("studios").where({ name: DEMO_STUDIO_NAME }).first<{ id: string } | undefined>("id");
  if (!studio) return 0;
  const ids = Object.fromEntries(
    await Promise.all(Object.entries(DEMO_ACCOUNTS).map(async ([k, a]) => [k, (await knex("users").where({ email: a.email }).first<{ id: string } | undefined>("id"))?.id ?? null])),
  ) as Record<keyof typeof DEMO_ACCOUNTS, string | null>;
  let steps = 0;
  const send = async (t: TrackFacts, renderId: string, at: Date, message: string) => {
    await knex("review_requests").insert({ track_id: t.trackId, render_id: renderId, message, sent_by: ids.engineer, created_at: at });
    steps++;
  };
  const comment = async (t: TrackFacts, renderId: string, timeS: number, body: string, at: Date, author: string | null) =>
    knex("comments").insert({ track_id: t.trackId, render_id: renderId, time_s: timeS, body, author_id: author, created_at: at });
  const verdict = async (t: TrackFacts, renderId: string, kind: "approve" | "changes", at: Date, note: string | null, user: string | null) => {
    await knex("review_events").insert({ track_id: t.trackId, render_id: renderId, kind, note, user_id: user, created_at: at });
    steps++;
  };
  // A preview of 8–38 s of the song, so the comments' times below fall inside it.
  const preview = (t: TrackFacts, targetLufs: number | null = null) =>
    createRender({ mixId: t.mixId, chainRevisionId: t.revisionId, kind: "preview", region: { startS: 8, endS: 38 }, targetLufs, createdBy: ids.engineer });

  const tinRoof = await trackFacts(knex, studio.id, "Tin Roof Morning");
  if (tinRoof) {
    const v1 = await preview(tinRoof);
    await send(tinRoof, v1.id, daysAgo(3), "First pass of Tin Roof Morning: gentle, with the hats a touch brighter. Tell me what you hear in the chorus.");
    await comment(tinRoof, v1.id, 18.5, "Listen here: the kick and the bass share this spot; I kept the low end tight so the chorus lifts.", daysAgo(3), ids.engineer);
    await comment(tinRoof, v1.id, 24, "The chorus feels a little squashed to me.", daysAgo(2.5), ids.artist);
    await verdict(tinRoof, v1.id, "changes", daysAgo(2.4), "Could the chorus breathe more? It feels squeezed next to the verse.", ids.artist);
    // Version 2: the same mix, louder overall but with room in the chorus (a loudness target).
    const v2 = await preview(tinRoof, -13);
    await send(tinRoof, v2.id, daysAgo(1), "Version 2: more room in the chorus, the level brought up evenly instead. Switch to the previous version to hear the difference.");
  }
  const slowFerry = await trackFacts(knex, studio.id, "Slow Ferry");
  if (slowFerry) {
    const print = await createRender({ mixId: slowFerry.mixId, chainRevisionId: slowFerry.revisionId, kind: "print", createdBy: ids.engineer });
    await send(slowFerry, print.id, daysAgo(4), "Slow Ferry, the full master. Nothing pushed: it stays quiet and wide.");
    await comment(slowFerry, print.id, 12, "The fade at the end is as in your mix; nothing added.", daysAgo(4), ids.engineer);
    await verdict(slowFerry, print.id, "approve", daysAgo(3.5), null, ids.artist);
  }
  const glasshouse = await trackFacts(knex, studio.id, "Glasshouse Signal");
  if (glasshouse) {
    const v1 = await preview(glasshouse);
    await send(glasshouse, v1.id, daysAgo(1.5), "Here is the single, 8 to 38 seconds in. The full master follows once you are happy with this.");
    await comment(glasshouse, v1.id, 20, "The synth lead sits a little forward here on purpose; say if you would rather it sat back.", daysAgo(1.5), ids.engineer);
  }
  return steps;
}

export async function seed(knex: Knex): Promise<void> {
  // The previous seed closed the app's pool on its way out; open it again for the models used here.
  if (db !== knex) db.initialize();
  try {
    const steps = await seedDemoReview(knex);
    if (steps > 0) console.error(`[tidemark] demo review: ${steps} review steps, renders queued for the worker`);
  } finally {
    await stopQueue();
    if (db !== knex) await db.destroy();
  }
}
