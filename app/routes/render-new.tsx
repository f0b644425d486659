// A new render of the track: a mix version through a chain's latest revision,
// as a preview (a region, or the loudest 30 s) or a print. Staff only.
import { useState } from "react";
import { data, Form, redirect } from "react-router";
import type { Route } from "./+types/render-new";
import { STAFF } from "../lib/roles.ts";
import { formValues, parseForm } from "../lib/forms.ts";
import { requireTrackAccess } from "../lib/render-access.server.ts";
import { listChainChoices } from "../lib/render-views.server.ts";
import { getRevision } from "../models/chain.server.ts";
import { listMixVersions } from "../models/mix.server.ts";
import { printRefusal } from "../../dsp/chain/print-check.ts";
import { createRender } from "../models/render.server.ts";
import { renderNewSchema } from "../schemas/render-new.ts";
import { BackLink, PageHeader } from "../components/page-header.tsx";
import { FormActions, SelectField, TextField } from "../components/field.tsx";
import { fmtDuration } from "../components/render/format.ts";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { release, track } = await requireTrackAccess(request, params, STAFF);
  const [mixes, chains] = await Promise.all([listMixVersions(track.id), listChainChoices(release.studioId, track.id)]);
  const url = new URL(request.url);
  return {
    release: { id: release.id, title: release.title },
    track: { id: track.id, title: track.title },
    mixes: mixes.map((m) => ({ id: m.id, label: `v${m.version} · ${m.originalName} · ${fmtDuration(m.durationSeconds)}` })),
    chains,
    defaults: { mixId: url.searchParams.get("mix") ?? mixes[0]?.id ?? "", kind: url.searchParams.get("kind") ?? "preview" },
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { user, release, track } = await requireTrackAccess(request, params, STAFF);
  const form = await request.formData();
  const result = parseForm(renderNewSchema, form);
  if (!result.ok) return data({ errors: result.errors, values: result.values }, { status: 400 });
  const input = result.data;
  const [mixes, chains] = await Promise.all([listMixVersions(track.id), listChainChoices(release.studioId, track.id)]);
  const mix = mixes.find((m) => m.id === input.mixId);
  const errors: Record<string, string> = {};
  if (!mix) errors.mixId = "Choose one of this track's mix versions";
  if (!chains.some((c) => c.revisionId === input.chainRevisionId)) errors.chainRevisionId = "Choose one of the chains listed";
  else if (input.kind === "print") {
    const refusal = printRefusal((await getRevision(input.chainRevisionId))?.params);
    if (refusal) errors.chainRevisionId = refusal;
  }
  const region = input.kind === "preview" && input.region === "range" ? { startS: input.startS!, endS: input.endS! } : null;
  if (mix && region && region.startS >= mix.durationSeconds) errors.startS = `The mix is ${mix.durationSeconds.toFixed(1)} s long`;
  if (Object.keys(errors).length > 0) return data({ errors, values: formValues(form) }, { status: 400 });
  if (mix && region) region.endS = Math.min(region.endS, mix.durationSeconds);
  const render = await createRender({
    mixId: input.mixId,
    chainRevisionId: input.chainRevisionId,
    kind: input.kind,
    region,
    targetLufs: input.targetLufs,
    createdBy: user.id,
  });
  throw redirect(`/releases/${release.id}/tracks/${track.id}/renders/${render.id}`);
}

export default function RenderNew({ loaderData, actionData }: Route.ComponentProps) {
  const { release, track, mixes, chains, defaults } = loaderData;
  const values = actionData?.values ?? {};
  const errors: Record<string, string | undefined> = actionData?.errors ?? {};
  const [kind, setKind] = useState(values.kind ?? defaults.kind);
  const [region, setRegion] = useState(values.region ?? "loudest");
  const base = `/releases/${release.id}/tracks/${track.id}`;
  return (
    <>
      <BackLink to={base}>{track.title}</BackLink>
      <PageHeader eyebrow={release.title} title="New render" />
      {chains.length === 0 ? (
        <p className="card max-w-2xl p-5 text-sm">There is no chain to render with yet: save a chain for this track, or a studio template, first.</p>
      ) : (
        <Form method="post" className="card grid max-w-2xl gap-4 p-5" noValidate>
          <SelectField label="Mix version" name="mixId" options={mixes.map((m) => ({ value: m.id, label: m.label }))} defaultValue={values.mixId ?? defaults.mixId} error={errors.mixId} />
          <SelectField label="Chain" name="chainRevisionId" options={chains.map((c) => ({ value: c.revisionId, label: c.label }))} defaultValue={values.chainRevisionId ?? chains[0].revisionId} error={errors.chainRevisionId} />
          <fieldset>
            <legend className="mb-1.5 text-sm font-medium">Kind</legend>
            <div className="flex flex-wrap gap-4 text-sm">
              <label className="flex items-center gap-2">
                <input type="radio" name="kind" value="preview" checked={kind === "preview"} onChange={() => setKind("preview")} /> Preview
              </label>
              <label className="flex items-center gap-2">
                <input type="radio" name="kind" value="print" checked={kind === "print"} onChange={() => setKind("print")} /> Print (the whole mix)
              </label>
            </div>
            {errors.kind && <p className="mt-1.5 text-sm text-danger" role="alert">{errors.kind}</p>}
          </fieldset>
          {kind === "preview" && (
            <fieldset>
              <legend className="mb-1.5 text-sm font-medium">Region</legend>
              <div className="flex flex-wrap gap-4 text-sm">
                <label className="flex items-center gap-2">
                  <input type="radio" name="region" value="loudest" checked={region === "loudest"} onChange={() => setRegion("loudest")} /> The loudest 30 s
                </label>
                <label className="flex items-center gap-2">
                  <input type="radio" name="region" value="range" checked={region === "range"} onChange={() => setRegion("range")} /> From … to …
                </label>
              </div>
              {region === "range" && (
                <div className="mt-3 grid gap-4 sm:grid-cols-2">
                  <TextField label="Start (s)" name="startS" inputMode="decimal" defaultValue={values.startS} error={errors.startS} />
                  <TextField label="End (s)" name="endS" inputMode="decimal" defaultValue={values.endS} error={errors.endS} />
                </div>
              )}
            </fieldset>
          )}
          <TextField
            label="Loudness target (LUFS, optional)"
            name="targetLufs"
            inputMode="decimal"
            defaultValue={values.targetLufs}
            error={errors.targetLufs}
            hint="Leave empty to render at the chain's own level."
          />
          <FormActions submitLabel="Render" cancelTo={base} className="flex flex-wrap gap-3" />
        </Form>
      )}
    </>
  );
}

export const meta: Route.MetaFunction = ({ data }) => [{ title: `New render of ${data?.track.title ?? "track"} · Tidemark` }];
