import { data, redirect } from "react-router";
import type { Route } from "./+types/track-new";
import { requireReleaseAccess } from "../lib/auth.server.ts";
import { formValues } from "../lib/forms.ts";
import { STAFF } from "../lib/roles.ts";
import { POSITION_RACE_MESSAGE, validateTrackForm } from "../lib/track-form.server.ts";
import { createTrack, isUniqueViolation, nextTrackPosition } from "../models/track.server.ts";
import { PageHeader } from "../components/page-header.tsx";
import { TrackForm } from "../components/track-form.tsx";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { release } = await requireReleaseAccess(request, params.releaseId, STAFF);
  return { release: { id: release.id, title: release.title }, nextPosition: await nextTrackPosition(release.id) };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { release } = await requireReleaseAccess(request, params.releaseId, STAFF);
  const form = await request.formData();
  const result = await validateTrackForm(release.id, form);
  if (!result.ok) return data({ errors: result.errors, values: result.values }, { status: 400 });
  try {
    await createTrack(release.id, result.data);
  } catch (error) {
    if (!isUniqueViolation(error)) throw error;
    return data({ errors: { position: POSITION_RACE_MESSAGE }, values: formValues(form) }, { status: 400 });
  }
  throw redirect(`/releases/${release.id}`);
}

export default function NewTrack({ loaderData, actionData }: Route.ComponentProps) {
  const { release, nextPosition } = loaderData;
  return (
    <>
      <PageHeader eyebrow={release.title} title="Add track" />
      <TrackForm
        key={nextPosition}
        values={actionData?.values ?? { position: String(nextPosition) }}
        errors={actionData?.errors ?? {}}
        submitLabel="Add track"
        cancelTo={`/releases/${release.id}`}
      />
    </>
  );
}

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Add track to ${data?.release.title ?? "release"} · Tidemark` }];
