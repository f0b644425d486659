// One chain (a track's, or a studio template) at the listening desk: the
// revision opened (?revision=N, else the latest) heard live on a mix version
// of the track (?mix=ID, else the newest), its revisions and what changed
// between two of them. Saving makes a new revision; a preview or print is
// queued from here too.
import { data, Form, Link, redirect } from "react-router";
import type { Route } from "./+types/chain";
import { requireRole } from "../lib/auth.server.ts";
import { notFound } from "../lib/http.server.ts";
import { STAFF } from "../lib/roles.ts";
import { getChainForStaff } from "../lib/chain-access.server.ts";
import { loadDesk, mixOfTrack, renderFromDesk, revisionForParams } from "../lib/desk.server.ts";
import { ChainInvalidError, createRevision } from "../models/chain.server.ts";
import { deskRenderSchema } from "../schemas/desk.ts";
import { parseForm } from "../lib/forms.ts";
import { BackLink, PageHeader } from "../components/page-header.tsx";
import { SelectField } from "../components/field.tsx";
import { RevisionDiff } from "../components/chain/revision-diff.tsx";
import { editorPath } from "../components/chain/labels.ts";
import { Desk } from "../components/desk/desk.tsx";

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireRole(request, STAFF);
  const chain = await getChainForStaff(user, params.chainId);
  if (!chain) throw notFound();
  const url = new URL(request.url);
  const desk = await loadDesk(chain, url);
  return {
    chain: { id: chain.id, name: chain.name, track: chain.track },
    latest: desk.revisions[0] ? { id: desk.revisions[0].id, revision: desk.revisions[0].revision } : null,
    ...desk,
    saved: url.searchParams.get("saved"),
  };
}

function chainErrors(error: ChainInvalidError) {
  const errors: Record<string, string> = {};
  for (const e of error.fieldErrors) errors[editorPath(e.path) || "chain"] ??= e.message;
  return errors;
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
  const intent = String(form.get("intent") ?? "save");
  if (intent === "render") {
    const parsed = parseForm(deskRenderSchema, form);
    if (!parsed.ok) return data({ errors: parsed.errors as Record<string, string>, formError: Object.values(parsed.errors)[0] }, { status: 400 });
    const mix = chain.track ? await mixOfTrack(chain.track.id, parsed.data.mixId) : undefined;
    if (!mix) return data({ errors: { mixId: "Choose one of this track's mix versions" } as Record<string, string>, formError: "Choose one of this track's mix versions." }, { status: 400 });
    try {
      const { revision, created } = await revisionForParams(chain.id, input, user.id);
      const region = parsed.data.kind === "preview" ? { startS: parsed.data.startS!, endS: parsed.data.endS! } : null;
      const render = await renderFromDesk({ chainRevisionId: revision.id, mix, kind: parsed.data.kind, region, userId: user.id });
      return {
        render: { id: render.id, kind: render.kind, revision: revision.revision, created, url: `/releases/${chain.track!.releaseId}/tracks/${chain.track!.id}/renders/${render.id}` },
      };
    } catch (error) {
      if (!(error instanceof ChainInvalidError)) throw error;
      return data({ errors: chainErrors(error), formError: "Not rendered: correct the fields marked in the chain." }, { status: 400 });
    }
  }
  if (intent !== "save") return data({ errors: {} as Record<string, string>, formError: "Unknown action." }, { status: 400 });
  try {
    const revision = await createRevision(chain.id, input, user.id);
    const mixId = String(form.get("mix") ?? "");
    return redirect(`/chains/${chain.id}?saved=${revision.revision}${mixId ? `&mix=${encodeURIComponent(mixId)}` : ""}`);
  } catch (error) {
    if (!(error instanceof ChainInvalidError)) throw error;
    return data({ errors: chainErrors(error), formError: undefined as string | undefined }, { status: 400 });
  }
}

export default function ChainPage({ loaderData, actionData }: Route.ComponentProps) {
  const { chain, latest, revisions, opened, mixes, mix, region, diff, saved } = loaderData;
  const revisionOptions = revisions.map((r) => ({ value: String(r.revision), label: `Revision ${r.revision}` }));
  const back = chain.track
    ? { to: `/releases/${chain.track.releaseId}/tracks/${chain.track.id}`, label: `${chain.track.releaseTitle} · ${chain.track.title}` }
    : { to: "/templates", label: "Studio templates" };
  const here = (revision: number) => `/chains/${chain.id}?revision=${revision}${mix ? `&mix=${mix.id}` : ""}`;
  return (
    <>
      <BackLink to={back.to}>{back.label}</BackLink>
      <PageHeader
        eyebrow={chain.track ? "Listening desk · track chain" : "Listening desk · studio template"}
        title={chain.name}
        actions={
          opened && (
            <span className="text-sm text-ink-soft">
              Revision <span className="num">{opened.revision}</span>
              {latest && opened.revision !== latest.revision && <> (latest: <span className="num">{latest.revision}</span>)</>}
            </span>
          )
        }
      />
      <Desk
        chainId={chain.id}
        opened={opened}
        revisions={revisions}
        mixes={mixes}
        mix={mix}
        region={region}
        serverErrors={(actionData as { errors?: Record<string, string> } | undefined)?.errors ?? {}}
        formError={(actionData as { formError?: string } | undefined)?.formError}
        saved={saved}
      />
      <section aria-labelledby="revisions" className="mt-8 max-w-3xl space-y-4">
        <h2 id="revisions" className="text-lg font-semibold">
          Revisions
        </h2>
        <ul className="divide-y divide-rule rounded-md border border-rule bg-card text-sm">
          {revisions.map((r) => (
            <li key={r.id} className="flex flex-wrap items-center justify-between gap-2 px-3 py-2">
              <span>
                Revision <span className="num">{r.revision}</span>
                {r.authorName && <span className="text-ink-soft"> · {r.authorName}</span>}
              </span>
              <span className="flex items-center gap-3">
                <time className="num text-ink-soft" dateTime={r.createdAt}>
                  {r.createdAt.slice(0, 16).replace("T", " ")} UTC
                </time>
                {opened?.revision === r.revision ? (
                  <span className="text-xs text-ink-soft">open</span>
                ) : (
                  <Link to={here(r.revision)} className="text-sm underline">
                    Open at the desk
                  </Link>
                )}
              </span>
            </li>
          ))}
        </ul>
        {revisions.length > 1 && (
          <Form method="get" className="flex flex-wrap items-end gap-2" aria-label="Compare revisions">
            {mix && <input type="hidden" name="mix" value={mix.id} />}
            {(["from", "to"] as const).map((name) => (
              <SelectField key={name} label={name === "from" ? "From" : "To"} name={name} options={revisionOptions} defaultValue={diff ? String(diff[name]) : undefined} />
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
    </>
  );
}

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.chain.name ?? "Chain"} · desk · Tidemark` }];
