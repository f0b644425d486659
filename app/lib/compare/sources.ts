// What the compare page compares: a track's finished renders and its mix
// versions, each named by a source key (`render:<id>`, `mix:<id>`) in the
// page's URL, and which two are compared when the URL names none.
//
// The default pair, when a render exists: the newest render (A) against the
// mix it was made from (B). That before/after check at equal loudness is the
// one an engineer makes on every new master (did the chain improve the mix,
// or only make it louder?), and it exists as soon as one render does; two
// renders are one click away in the selects. A client, who never hears the
// mixes, gets the two newest renders sent to them.
import { z } from "zod";

/** A reference track (staff only) is compared like a source, but never chosen by default. */
export type SourceType = "render" | "mix" | "reference";
export type SourceKey = { type: SourceType; id: string };

// Any 8-4-4-4-12 hex id, as app/lib/ids.ts accepts (not only RFC 4122 versions).
const uuid = z.guid();
const keySchema = z.union([
  z.templateLiteral([z.enum(["render", "mix", "reference"]), ":", uuid]).transform((text): SourceKey => {
    const [type, id] = text.split(":") as [SourceType, string];
    return { type, id: id.toLowerCase() };
  }),
  // A bare id is a render: links in e-mails sent before mixes could be compared read `?a=<render id>`.
  uuid.transform((id): SourceKey => ({ type: "render", id: id.toLowerCase() })),
]);

/** "render:<uuid>", "mix:<uuid>", "reference:<uuid>" or a bare render uuid → the key; anything else → null. */
export function parseSourceKey(text: string | null | undefined): SourceKey | null {
  const parsed = keySchema.safeParse(text ?? "");
  return parsed.success ? parsed.data : null;
}

export const formatSourceKey = (key: SourceKey): string => `${key.type}:${key.id}`;

/** What choosing a pair needs of a source. `mixId` is a render's mix, or the mix itself. */
export type PairCandidate = { key: string; type: SourceType; id: string; mixId: string };

/**
 * The two sources to compare. `sources` lists the renders newest first, then
 * the mixes newest first. A wanted key that is not among them is ignored, as
 * is a B equal to A.
 */
export function choosePair<T extends PairCandidate>(sources: readonly T[], wanted: { a?: string | null; b?: string | null }): { a: T | null; b: T | null } {
  const find = (text: string | null | undefined) => {
    const key = parseSourceKey(text);
    return key ? sources.find((s) => s.type === key.type && s.id === key.id) : undefined;
  };
  const renders = sources.filter((s) => s.type === "render");
  const mixes = sources.filter((s) => s.type === "mix");
  const a = find(wanted.a) ?? renders[0] ?? mixes[0] ?? null;
  if (!a) return { a: null, b: null };
  const wantedB = find(wanted.b);
  if (wantedB && wantedB.key !== a.key) return { a, b: wantedB };
  const others = sources.filter((s) => s.key !== a.key && s.type !== "reference");
  let b: T | undefined;
  if (a.type === "render") {
    b = mixes.find((m) => m.id === a.mixId) ?? others.find((s) => s.type === "render");
  } else {
    // A mix: what was made of it, else the version before it.
    b = renders.find((r) => r.mixId === a.id) ?? mixes[mixes.indexOf(a) + 1];
  }
  return { a, b: b ?? others[0] ?? null };
}
