// The review room's address within the app (e-mails use reviewRoomLink, with the public address).
const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** `/releases/R/room?track=T[&render=X]`; a render given as a compare key ("render:ID") is accepted too. */
export function roomPath(releaseId: string, trackId: string, render?: string | null): string {
  const id = render?.replace(/^render:/, "");
  return `/releases/${releaseId}/room?track=${trackId}${id && UUID.test(id) ? `&render=${id}` : ""}`;
}
