import { data, redirect } from "react-router";
import type { Route } from "./+types/release-edit";
import { requireReleaseAccess } from "../lib/auth.server.ts";
import { STAFF } from "../lib/roles.ts";
import { validateReleaseForm } from "../lib/release-form.server.ts";
import { listClients } from "../models/client.server.ts";
import { updateRelease } from "../models/release.server.ts";
import { PageHeader } from "../components/page-header.tsx";
import { ReleaseForm } from "../components/release-form.tsx";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { user, release } = await requireReleaseAccess(request, params.releaseId, STAFF);
  return { release, clients: await listClients(user.studioId) };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { user, release } = await requireReleaseAccess(request, params.releaseId, STAFF);
  const result = await validateReleaseForm(user.studioId, await request.formData());
  if (!result.ok) return data({ errors: result.errors, values: result.values }, { status: 400 });
  await updateRelease(user.studioId, release.id, result.data);
  throw redirect(`/releases/${release.id}`);
}

export default function EditRelease({ loaderData, actionData }: Route.ComponentProps) {
  const { release, clients } = loaderData;
  const saved = { title: release.title, kind: release.kind, clientId: release.clientId, status: release.status, dueOn: release.dueOn ?? "" };
  return (
    <>
      <PageHeader eyebrow={release.clientName} title={`Edit ${release.title}`} />
      <ReleaseForm clients={clients} values={actionData?.values ?? saved} errors={actionData?.errors ?? {}} submitLabel="Save release" cancelTo={`/releases/${release.id}`} />
    </>
  );
}

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Edit ${data?.release.title ?? "release"} · Tidemark` }];
