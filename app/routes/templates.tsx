// The studio's chain templates: the starting points for a track's chain.
import { data, Link, redirect } from "react-router";
import type { Route } from "./+types/templates";
import { requireRole } from "../lib/auth.server.ts";
import { STAFF } from "../lib/roles.ts";
import { listTemplatesWithRevision, startChain } from "../lib/chain-access.server.ts";
import { parseNewChainForm } from "../lib/chain-form.server.ts";
import { PageHeader } from "../components/page-header.tsx";
import { NewChainForm } from "../components/chain/new-chain-form.tsx";

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, STAFF);
  const templates = await listTemplatesWithRevision(user.studioId);
  return { templates: templates.map((t) => ({ ...t, updatedAt: new Date(t.updatedAt).toISOString() })) };
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireRole(request, STAFF);
  const result = parseNewChainForm(await request.formData());
  if (!result.ok) return data({ errors: result.errors, values: result.values }, { status: 400 });
  const chain = await startChain(user, { trackId: null, name: result.data.name, templateId: result.data.templateId });
  if (!chain) return data({ errors: { templateId: "Choose one of the studio's templates" }, values: { name: result.data.name } }, { status: 400 });
  return redirect(`/chains/${chain.id}`);
}

export default function Templates({ loaderData, actionData }: Route.ComponentProps) {
  const { templates } = loaderData;
  return (
    <>
      <PageHeader title="Studio templates" />
      <p className="mb-4 max-w-2xl text-sm text-ink-soft">
        A track's chain can start as a copy of a template; changing a template later does not change the chains made from it.
      </p>
      {templates.length === 0 ? (
        <p className="mb-6 text-sm text-ink-soft">No templates yet.</p>
      ) : (
        <ul className="mb-8 max-w-2xl divide-y divide-rule rounded-md border border-rule bg-card">
          {templates.map((t) => (
            <li key={t.id} className="flex flex-wrap items-baseline justify-between gap-2 px-4 py-3">
              <Link to={`/chains/${t.id}`} className="font-medium text-accent-deep underline-offset-4 hover:underline">
                {t.name}
              </Link>
              <span className="text-sm text-ink-soft">
                revision <span className="num">{t.revision}</span>
              </span>
            </li>
          ))}
        </ul>
      )}
      <h2 className="mb-3 text-lg font-semibold">New template</h2>
      <NewChainForm templates={templates} errors={actionData?.errors ?? {}} values={actionData?.values ?? {}} submitLabel="Create template" />
    </>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Studio templates · Tidemark" }];
