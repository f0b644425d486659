import { data, redirect } from "react-router";
import type { Route } from "./+types/track-edit";
import { requireReleaseAccess } from "../lib/auth.server.ts";
import { formValues } from "../lib/forms.ts";
import { notFound } from "../lib/http.server.ts";
import { STAFF } from "../lib/roles.ts";
import { POSITION_RACE_MESSAGE, validateTrackForm } from "../lib/track-form.server.ts";
import { getTrack, isUniqueViolation, updateTrack } from "../models/track.server.ts";
import { formatIsrc } from "../schemas/track.ts";
import { PageHeader } from "../components/page-header.tsx";
import { TrackForm } from "../components/track-form.tsx";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { release } = await requireReleaseAccess(request, params.releaseId, STAFF);
  const track = await getTrack(release.id, params.trackId);
  if (!track) throw notFound();
  return { release: { id: release.id, title: release.title }, track };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { release } = await requireReleaseAccess(request, params.releaseId, STAFF);
  const track = await getTrack(release.id, params.trackId);
  if (!track) throw notFound();
  const form = await request.formData();
  const result = await validateTrackForm(release.id, form, track.id);
  if (!result.ok) return data({ errors: result.errors, values: result.values }, { status: 400 });
  try {
    await updateTrack(release.id, track.id, result.data);
  } catch (error) {
    if (!isUniqueViolation(error)) throw error;
    return data({ errors: { position: POSITION_RACE_MESSAGE }, values: formValues(form) }, { status: 400 });
  }
  throw redirect(`/releases/${release.id}/tracks/${track.id}`);
}

export default function EditTrack({ loaderData, actionData }: Route.ComponentProps) {
  const { release, track } = loaderData;
  const saved = { title: track.title, position: String(track.position), isrc: track.isrc ? formatIsrc(track.isrc) : "" };
  return (
    <>
      <PageHeader eyebrow={release.title} title={`Edit ${track.title}`} />
      <TrackForm values={actionData?.values ?? saved} errors={actionData?.errors ?? {}} submitLabel="Save track" cancelTo={`/releases/${release.id}/tracks/${track.id}`} />
    </>
  );
}

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Edit ${data?.track.title ?? "track"} · Tidemark` }];
