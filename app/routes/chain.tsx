// One chain (a track's, or a studio template): the editor, its revisions and
// what changed between two of them. Saving always makes a new revision.
import { data, Form, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/chain";
import { requireRole } from "../lib/auth.server.ts";
import { notFound } from "../lib/http.server.ts";
import { STAFF } from "../lib/roles.ts";
import { getChainForStaff } from "../lib/chain-access.server.ts";
import { ChainInvalidError, createRevision, diffParams, listRevisions } from "../models/chain.server.ts";
import { BackLink, PageHeader } from "../components/page-header.tsx";
import { SelectField } from "../components/field.tsx";
import { ChainEditor, type EditableChain } from "../components/chain/chain-editor.tsx";
import { RevisionDiff } from "../components/chain/revision-diff.tsx";
import { editorPath } from "../components/chain/labels.ts";

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireRole(request, STAFF);
  const chain = await getChainForStaff(user, params.chainId);
  if (!chain) throw notFound();
  const revisions = await listRevisions(chain.id);
  const url = new URL(request.url);
  const pick = (name: string, fallback: number | undefined) => {
    const n = Number(url.searchParams.get(name));
    return revisions.find((r) => r.revision === n) ?? revisions.find((r) => r.revision === fallback);
  };
  const latest = revisions[0];
  const to = pick("to", latest?.revision);
  const from = pick("from", to ? to.revision - 1 : undefined);
  const diff = from && to && from.id !== to.id ? { from: from.revision, to: to.revision, before: from.params, after: to.params, changes: diffParams(from.params, to.params) } : null;
  return {
    chain: { id: chain.id, name: chain.name, track: chain.track },
    latest: latest ? { id: latest.id, revision: latest.revision, params: latest.params as EditableChain } : null,
    revisions: revisions.map((r) => ({ id: r.id, revision: r.revision, authorName: r.authorName, createdAt: r.createdAt.toISOString() })),
    diff,
    saved: url.searchParams.get("saved"),
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireRole(request, STAFF);
  const chain = await getChainForStaff(user, params.chainId);
  if (!chain) throw notFound();
  const form = await request.formData();
  let input: unknown;
  try {
    input = JSON.parse(String(form.get("params") ?? ""));
  } catch {
    return data({ errors: {} as Record<string, string>, formError: "The chain could not be read; reload the page and try again." }, { status: 400 });
  }
  try {
    const revision = await createRevision(chain.id, input, user.id);
    return redirect(`/chains/${chain.id}?saved=${revision.revision}`);
  } catch (error) {
    if (!(error instanceof ChainInvalidError)) throw error;
    const errors: Record<string, string> = {};
    for (const e of error.fieldErrors) errors[editorPath(e.path) || "chain"] ??= e.message;
    return data({ errors, formError: undefined as string | undefined }, { status: 400 });
  }
}

export default function ChainPage({ loaderData, actionData }: Route.ComponentProps) {
  const { chain, latest, revisions, diff, saved } = loaderData;
  const revisionOptions = revisions.map((r) => ({ value: String(r.revision), label: `Revision ${r.revision}` }));
  const navigation = useNavigation();
  const back = chain.track
    ? { to: `/releases/${chain.track.releaseId}/tracks/${chain.track.id}`, label: `${chain.track.releaseTitle} · ${chain.track.title}` }
    : { to: "/templates", label: "Studio templates" };
  return (
    <>
      <BackLink to={back.to}>{back.label}</BackLink>
      <PageHeader
        eyebrow={chain.track ? "Track chain" : "Studio template"}
        title={chain.name}
        actions={latest && <span className="text-sm text-ink-soft">Revision <span className="num">{latest.revision}</span></span>}
      />
      {saved && !actionData && (
        <p className="mb-4 rounded-md border border-accent/30 bg-accent-wash px-3 py-2 text-sm text-accent-deep" role="status">
          Saved as revision <span className="num">{saved}</span>.
        </p>
      )}
      <div className="grid gap-8 xl:grid-cols-[minmax(0,2fr)_minmax(0,1fr)]">
        <section aria-labelledby="editor">
          <h2 id="editor" className="mb-3 text-lg font-semibold">
            Stages
          </h2>
          <ChainEditor
            key={latest?.id ?? "blank"}
            initial={latest?.params ?? { stages: [], output: {} }}
            errors={actionData?.errors ?? {}}
            formError={actionData?.formError}
            submitting={navigation.state === "submitting"}
          />
        </section>
        <section aria-labelledby="revisions" className="space-y-4">
          <h2 id="revisions" className="text-lg font-semibold">
            Revisions
          </h2>
          <ul className="divide-y divide-rule rounded-md border border-rule bg-card text-sm">
            {revisions.map((r) => (
              <li key={r.id} className="flex flex-wrap justify-between gap-2 px-3 py-2">
                <span>
                  Revision <span className="num">{r.revision}</span>
                  {r.authorName && <span className="text-ink-soft"> · {r.authorName}</span>}
                </span>
                <time className="num text-ink-soft" dateTime={r.createdAt}>
                  {r.createdAt.slice(0, 16).replace("T", " ")} UTC
                </time>
              </li>
            ))}
          </ul>
          {revisions.length > 1 && (
            <Form method="get" className="flex flex-wrap items-end gap-2" aria-label="Compare revisions">
              {(["from", "to"] as const).map((name) => (
                <SelectField
                  key={name}
                  label={name === "from" ? "From" : "To"}
                  name={name}
                  options={revisionOptions}
                  defaultValue={diff ? String(diff[name]) : undefined}
                />
              ))}
              <button type="submit" className="btn-quiet">
                Compare
              </button>
            </Form>
          )}
          {diff && (
            <div aria-labelledby="diff-title">
              <h3 id="diff-title" className="mb-2 font-semibold">
                Revision <span className="num">{diff.from}</span> → <span className="num">{diff.to}</span>
              </h3>
              <RevisionDiff changes={diff.changes} before={diff.before} after={diff.after} />
            </div>
          )}
        </section>
      </div>
    </>
  );
}

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.chain.name ?? "Chain"} · Tidemark` }];
