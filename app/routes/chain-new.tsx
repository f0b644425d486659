// A new chain for a track, started from a studio template or empty.
import { data, Link, redirect } from "react-router";
import type { Route } from "./+types/chain-new";
import { requireReleaseAccess } from "../lib/auth.server.ts";
import { notFound } from "../lib/http.server.ts";
import { STAFF } from "../lib/roles.ts";
import { startChain } from "../lib/chain-access.server.ts";
import { parseNewChainForm } from "../lib/chain-form.server.ts";
import { listTemplates, listTrackChains } from "../models/chain.server.ts";
import { getTrack } from "../models/track.server.ts";
import { BackLink, PageHeader } from "../components/page-header.tsx";
import { NewChainForm } from "../components/chain/new-chain-form.tsx";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { user, release } = await requireReleaseAccess(request, params.releaseId, STAFF);
  const track = await getTrack(release.id, params.trackId);
  if (!track) throw notFound();
  const [templates, chains] = await Promise.all([listTemplates(user.studioId), listTrackChains(track.id)]);
  return {
    release: { id: release.id, title: release.title },
    track: { id: track.id, title: track.title },
    templates: templates.map((t) => ({ id: t.id, name: t.name })),
    chains: chains.map((c) => ({ id: c.id, name: c.name })),
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { user, release } = await requireReleaseAccess(request, params.releaseId, STAFF);
  const track = await getTrack(release.id, params.trackId);
  if (!track) throw notFound();
  const result = parseNewChainForm(await request.formData());
  if (!result.ok) return data({ errors: result.errors, values: result.values }, { status: 400 });
  const chain = await startChain(user, { trackId: track.id, name: result.data.name, templateId: result.data.templateId });
  if (!chain) return data({ errors: { templateId: "Choose one of the studio's templates" }, values: { name: result.data.name } }, { status: 400 });
  return redirect(`/chains/${chain.id}`);
}

export default function ChainNew({ loaderData, actionData }: Route.ComponentProps) {
  const { release, track, templates, chains } = loaderData;
  return (
    <>
      <BackLink to={`/releases/${release.id}/tracks/${track.id}`}>{release.title} · {track.title}</BackLink>
      <PageHeader eyebrow={track.title} title="New chain" />
      <NewChainForm
        templates={templates}
        errors={actionData?.errors ?? {}}
        values={actionData?.values ?? { name: `${track.title} chain ${chains.length + 1}` }}
        submitLabel="Create chain"
      />
      {chains.length > 0 && (
        <section className="mt-8" aria-labelledby="existing">
          <h2 id="existing" className="mb-2 text-lg font-semibold">
            This track's chains
          </h2>
          <ul className="space-y-1 text-sm">
            {chains.map((c) => (
              <li key={c.id}>
                <Link to={`/chains/${c.id}`} className="text-accent-deep underline-offset-4 hover:underline">
                  {c.name}
                </Link>
              </li>
            ))}
          </ul>
        </section>
      )}
      <p className="mt-6 text-sm">
        <Link to="/templates" className="text-accent-deep underline-offset-4 hover:underline">
          Studio templates
        </Link>
      </p>
    </>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "New chain · Tidemark" }];
