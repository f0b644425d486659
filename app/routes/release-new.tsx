import { data, redirect } from "react-router";
import type { Route } from "./+types/release-new";
import { requireRole } from "../lib/auth.server.ts";
import { STAFF } from "../lib/roles.ts";
import { validateReleaseForm } from "../lib/release-form.server.ts";
import { listClients } from "../models/client.server.ts";
import { createRelease } from "../models/release.server.ts";
import { PageHeader } from "../components/page-header.tsx";
import { ReleaseForm } from "../components/release-form.tsx";

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, STAFF);
  return { clients: await listClients(user.studioId) };
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireRole(request, STAFF);
  const result = await validateReleaseForm(user.studioId, await request.formData());
  if (!result.ok) return data({ errors: result.errors, values: result.values }, { status: 400 });
  const releaseId = await createRelease(user.studioId, result.data);
  throw redirect(`/releases/${releaseId}`);
}

export default function NewRelease({ loaderData, actionData }: Route.ComponentProps) {
  return (
    <>
      <PageHeader title="New release" />
      {loaderData.clients.length === 0 ? (
        <p className="card px-5 py-6 text-ink-soft">Add a client on the Team page first; every release belongs to one.</p>
      ) : (
        <ReleaseForm clients={loaderData.clients} values={actionData?.values ?? {}} errors={actionData?.errors ?? {}} submitLabel="Create release" cancelTo="/" />
      )}
    </>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "New release · Tidemark" }];
