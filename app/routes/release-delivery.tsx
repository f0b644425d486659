// /releases/:releaseId/delivery — the release's delivery formats (the
// studio's defaults until the release gets its own), which tracks are
// approved and which are left out and why, "Make deliveries" (every approved
// track's approved print × every format, one queued job each), and the
// deliveries with their state and warnings. Staff only: clients get their
// files from the release page. Deleting a format has a confirmation step;
// what becomes of its files is app/models/release-formats.server.ts.
import { useEffect } from "react";
import { data, Form, Link, redirect, useRevalidator } from "react-router";
import { fmt } from "../components/render/format.ts";
import { z } from "zod";
import type { Route } from "./+types/release-delivery";
import { DELIVERY_SAMPLE_RATES } from "../../dsp/delivery/delivery-format.ts";
import { requireReleaseAccess } from "../lib/auth.server.ts";
import { formValues, parseForm } from "../lib/forms.ts";
import { STAFF } from "../lib/roles.ts";
import { enqueueDelivery } from "../jobs/queue.server.ts";
import { queueReleaseDeliveries, releaseFormats } from "../models/delivery.server.ts";
import { deleteReleaseFormat, finishedFilesIn, hasOwnFormats, listReleaseDeliveries, saveReleaseFormat } from "../models/release-formats.server.ts";
import { releaseDeliveryPlan } from "../models/delivery-plan.server.ts";
import { REVIEW_STATUS_LABEL } from "../lib/review/state.ts";
import { FormNotice, SelectField, TextField } from "../components/field.tsx";
import { PageHeader } from "../components/page-header.tsx";
import { DataTable } from "../components/data-table.tsx";

const dbNumber = (label: string, min: number, max: number, unit: string) =>
  z
    .string()
    .trim()
    .min(1, `Enter ${label}.`)
    .transform((t) => Number(t.replace("−", "-")))
    .refine((n) => Number.isFinite(n) && n >= min && n <= max, `Write a number from ${min} to ${max} ${unit}.`);

export const formatSchema = z.object({
  name: z.string().trim().min(1, "Enter a name.").max(80, "At most 80 characters."),
  sampleRate: z.enum(DELIVERY_SAMPLE_RATES.map(String) as [string, ...string[]], "Pick a sample rate.").transform(Number),
  bitDepth: z.enum(["16", "24", "32f"], "Pick a bit depth."),
  dither: z.enum(["tpdf", "none"], "Pick dither or none."),
  ceilingDbtp: dbNumber("a ceiling", -20, 0, "dBTP"),
  targetLufs: z
    .string()
    .trim()
    .transform((t) => (t === "" ? undefined : Number(t.replace("−", "-"))))
    .refine((n) => n === undefined || (Number.isFinite(n) && n >= -60 && n <= 0), "Leave empty, or write a number from -60 to 0 LUFS."),
});

// A print is a few minutes; the job's time limit is sized for 10 minutes of audio.
const ASSUMED_AUDIO_SECONDS = 600;

export async function loader({ request, params }: Route.LoaderArgs) {
  const { release } = await requireReleaseAccess(request, params.releaseId, STAFF);
  const [formats, own, rows, plan] = await Promise.all([
    releaseFormats(release.id),
    hasOwnFormats(release.id),
    listReleaseDeliveries(release.id),
    releaseDeliveryPlan(release.id),
  ]);
  const search = new URL(request.url).searchParams;
  const deleting = formats.find((f) => f.id === search.get("delete")) ?? null;
  const madeInDeleting = deleting ? await finishedFilesIn(release.id, deleting.id) : 0;
  return {
    release: { id: release.id, title: release.title },
    editing: formats.find((f) => f.id === search.get("edit")) ?? null,
    deleting: deleting && { id: deleting.id, name: deleting.name, finishedFiles: madeInDeleting },
    formats,
    ownFormats: own,
    deliveries: rows,
    tracks: plan.map((p) => ({ id: p.trackId, position: p.position, title: p.title, review: REVIEW_STATUS_LABEL[p.review], delivered: p.reason === null, reason: p.reason })),
  };
}

type Reply = { intent: string; errors: Record<string, string | undefined>; values: Record<string, string>; queued: number; alreadyMade: number; leftOut: number; printsQueued: number };
const reply = (r: Partial<Reply> & { intent: string }, status = 200) => data<Reply>({ errors: {}, values: {}, queued: 0, alreadyMade: 0, leftOut: 0, printsQueued: 0, ...r }, { status });

export async function action({ request, params }: Route.ActionArgs) {
  const { user, release } = await requireReleaseAccess(request, params.releaseId, STAFF);
  const form = await request.formData();
  const intent = String(form.get("intent") ?? "");
  if (intent === "make") {
    const { deliveryIds, alreadyMade, leftOut, waitingOnPrint, printsQueued } = await queueReleaseDeliveries(release.id, undefined, { createdBy: user.id });
    for (const id of deliveryIds) await enqueueDelivery(id, ASSUMED_AUDIO_SECONDS);
    return reply({ intent, queued: deliveryIds.length + waitingOnPrint.length, alreadyMade, leftOut: leftOut.length, printsQueued });
  }
  if (intent === "delete-format") {
    if (form.get("confirm") !== "yes") return reply({ intent, errors: { form: "Confirm the deletion." } }, 400);
    const formatId = String(form.get("formatId") ?? "");
    const outcome = await deleteReleaseFormat(user.studioId, release.id, formatId);
    if (outcome === "not-ours") return reply({ intent, errors: { form: "That format is not one of this release's." } }, 400);
    if (outcome === "last") return reply({ intent, errors: { form: "A release needs at least one format: add another before deleting this one." } }, 400);
    return redirect(`/releases/${release.id}/delivery`);
  }
  if (intent !== "add-format") return reply({ intent, errors: { form: "Unknown action." } }, 400);
  const result = parseForm(formatSchema, form);
  const values = formValues(form);
  if (!result.ok) return reply({ intent, errors: result.errors, values: result.values }, 400);
  const f = result.data;
  const format = {
    name: f.name,
    sampleRate: f.sampleRate as (typeof DELIVERY_SAMPLE_RATES)[number],
    bitDepth: f.bitDepth === "32f" ? ("32f" as const) : (Number(f.bitDepth) as 16 | 24),
    dither: f.dither,
    ceilingDbtp: f.ceilingDbtp,
    ...(f.targetLufs !== undefined ? { targetLufs: f.targetLufs } : {}),
  };
  const editId = String(form.get("formatId") ?? "");
  try {
    const found = await saveReleaseFormat(user.studioId, release.id, format, editId || null);
    if (!found) return reply({ intent, errors: { form: "That format is not one of this release's." }, values }, 400);
  } catch (error) {
    const message = (error as Error).message;
    if (/delivery_formats|unique|duplicate/i.test(message)) return reply({ intent, errors: { name: "This release already has a format of that name." }, values }, 400);
    if (error instanceof RangeError) return reply({ intent, errors: { form: message }, values }, 400);
    throw error;
  }
  return redirect(`/releases/${release.id}/delivery`);
}

const RATE_OPTIONS = DELIVERY_SAMPLE_RATES.map((r) => ({ value: String(r), label: `${(r / 1000).toString()} kHz` }));
const DEPTH_OPTIONS = [
  { value: "24", label: "24-bit" },
  { value: "16", label: "16-bit" },
  { value: "32f", label: "32-bit float" },
];

export default function ReleaseDelivery({ loaderData, actionData }: Route.ComponentProps) {
  const { release, formats, ownFormats, deliveries, editing, deleting, tracks } = loaderData;
  const leftOut = tracks.filter((t) => !t.delivered);
  const add = actionData?.intent === "add-format" ? actionData : undefined;
  const removal = actionData?.intent === "delete-format" ? actionData : undefined;
  // Field defaults: what was typed (after a refusal), else the format being edited.
  const initial = add?.values.name !== undefined ? add.values : editing ? { name: editing.name, sampleRate: String(editing.sampleRate), bitDepth: String(editing.bitDepth), dither: editing.dither, ceilingDbtp: String(editing.ceilingDbtp), targetLufs: editing.targetLufs === undefined ? "" : String(editing.targetLufs) } : undefined;
  const made = actionData?.intent === "make" ? actionData : undefined;
  // While files are being made (or wait for their print), reload the page's data every 2 s, as the render page does.
  const revalidator = useRevalidator();
  const working = deliveries.some((d) => d.state === "queued" || d.state === "running");
  useEffect(() => {
    if (!working) return;
    const timer = setInterval(() => {
      if (revalidator.state === "idle") void revalidator.revalidate();
    }, 2000);
    return () => clearInterval(timer);
  }, [working, revalidator]);
  return (
    <>
      <PageHeader
        eyebrow={<Link to={`/releases/${release.id}`}>{release.title}</Link>}
        title="Deliveries"
        actions={
          <Link to={`/releases/${release.id}/loudness-report`} className="btn-quiet">
            Loudness report
          </Link>
        }
      />
      <section className="mb-8" aria-labelledby="formats-heading">
        <h2 id="formats-heading" className="mb-2 text-lg font-semibold">
          Formats
        </h2>
        <p className="mb-3 text-sm text-ink-soft">{ownFormats ? "This release's own formats." : "The studio's default formats. Adding, editing or deleting one gives this release its own list, starting from these."}</p>
        <DataTable
          label="Delivery formats"
          frameClassName="mb-4"
          columns={[{ label: "Name" }, { label: "Sample rate" }, { label: "Bit depth" }, { label: "Dither" }, { label: "Ceiling" }, { label: "Target" }, { label: "Edit or delete", hiddenLabel: true }]}
        >
          {formats.map((f) => (
            <tr key={f.id}>
              <td>{f.name}</td>
              <td className="num">{f.sampleRate} Hz</td>
              <td className="num">{f.bitDepth === "32f" ? "32-bit float" : `${f.bitDepth}-bit`}</td>
              <td>{f.dither === "tpdf" ? "TPDF" : "none"}</td>
              <td className="num">{f.ceilingDbtp} dBTP</td>
              <td className="num">{f.targetLufs !== undefined ? `${f.targetLufs} LUFS` : "keep level"}</td>
              <td className="whitespace-nowrap">
                <Link to={`?edit=${f.id}#format-form`} className="text-accent-deep underline-offset-4 hover:underline" aria-label={`Edit ${f.name}`}>
                  Edit
                </Link>
                {formats.length > 1 && (
                  <Link to={`?delete=${f.id}#format-delete`} className="ml-3 text-danger underline-offset-4 hover:underline" aria-label={`Delete ${f.name}`}>
                    Delete
                  </Link>
                )}
              </td>
            </tr>
          ))}
        </DataTable>
        <FormNotice message={removal?.errors.form} />
        {deleting && (
          <Form id="format-delete" method="post" className="card mb-4 space-y-3 border-danger/40 p-5" role="group" aria-labelledby="format-delete-heading">
            <input type="hidden" name="intent" value="delete-format" />
            <input type="hidden" name="formatId" value={deleting.id} />
            <input type="hidden" name="confirm" value="yes" />
            <h3 id="format-delete-heading" className="font-semibold">
              Delete the format “{deleting.name}”?
            </h3>
            <p className="text-sm text-ink-soft">
              {deleting.finishedFiles > 0
                ? deleting.finishedFiles === 1
                  ? "The file already made in it stays in storage and in the list below, but leaves the release package and the loudness report."
                  : `The ${deleting.finishedFiles} files already made in it stay in storage and in the list below, but leave the release package and the loudness report.`
                : "No file has been made in it yet."}{" "}
              Deliveries still queued in it are dropped.
            </p>
            <div className="flex flex-wrap gap-3">
              <button type="submit" className="btn-primary">
                Delete format
              </button>
              <Link to="." className="btn-quiet">
                Keep it
              </Link>
            </div>
          </Form>
        )}
        <Form key={editing?.id ?? `new-${formats.length}`} id="format-form" method="post" className="card grid gap-4 p-5 sm:grid-cols-2 lg:grid-cols-3" noValidate>
          <input type="hidden" name="intent" value="add-format" />
          {editing && <input type="hidden" name="formatId" value={editing.id} />}
          <h3 className="font-semibold sm:col-span-2 lg:col-span-3">{editing ? `Edit ${editing.name}` : "Add a format"}</h3>
          <div className="sm:col-span-2 lg:col-span-3">
            <FormNotice message={add?.errors.form} />
          </div>
          <TextField label="Name" name="name" defaultValue={initial?.name} error={add?.errors.name} />
          <SelectField label="Sample rate" name="sampleRate" options={RATE_OPTIONS} defaultValue={initial?.sampleRate ?? "48000"} error={add?.errors.sampleRate} />
          <SelectField label="Bit depth" name="bitDepth" options={DEPTH_OPTIONS} defaultValue={initial?.bitDepth ?? "24"} error={add?.errors.bitDepth} />
          <SelectField label="Dither" name="dither" options={[{ value: "tpdf", label: "TPDF" }, { value: "none", label: "None" }]} defaultValue={initial?.dither ?? "tpdf"} error={add?.errors.dither} />
          <TextField label="Ceiling (dBTP)" name="ceilingDbtp" inputMode="decimal" defaultValue={initial?.ceilingDbtp ?? "-1"} error={add?.errors.ceilingDbtp} />
          <TextField label="Target (LUFS, optional)" name="targetLufs" inputMode="decimal" hint="Empty keeps the print's level." defaultValue={initial?.targetLufs} error={add?.errors.targetLufs} />
          <div className="sm:col-span-2 lg:col-span-3">
            <button type="submit" className="btn-quiet">
              {editing ? "Save format" : "Add format"}
            </button>
          </div>
        </Form>
      </section>
      <section className="mb-8" aria-labelledby="tracks-heading">
        <h2 id="tracks-heading" className="mb-2 text-lg font-semibold">
          Tracks
        </h2>
        <p className="mb-3 text-sm text-ink-soft">
          Only approved tracks are delivered, from a print of exactly what the client approved (made automatically when missing). {tracks.length - leftOut.length} of {tracks.length} {tracks.length === 1 ? "track is" : "tracks are"} ready.
        </p>
        {leftOut.length > 0 && (
          <div className="card p-5">
            <h3 className="mb-2 text-sm font-semibold">Left out of deliveries</h3>
            <ul className="space-y-2 text-sm" aria-label="Tracks left out">
              {leftOut.map((t) => (
                <li key={t.id} data-track-left-out={t.id}>
                  <span className="num text-ink-soft">{t.position}.</span> <Link to={`/releases/${release.id}/tracks/${t.id}`} className="font-medium text-accent-deep underline-offset-4 hover:underline">{t.title}</Link>{" "}
                  <span className="text-ink-soft">({t.review})</span>: {t.reason}
                </li>
              ))}
            </ul>
          </div>
        )}
      </section>
      <section aria-labelledby="deliveries-heading">
        <h2 id="deliveries-heading" className="mb-2 text-lg font-semibold">
          Delivered files
        </h2>
        <Form method="post" className="mb-4 flex flex-wrap items-center gap-3">
          <input type="hidden" name="intent" value="make" />
          <button type="submit" className="btn-primary">
            Make deliveries
          </button>
          <span className="text-sm text-ink-soft">Every approved track, from its approved print, in every format above; files already made from that print are kept.</span>
        </Form>
        {made && (
          <FormNotice
            tone="info"
            message={`${made.queued} ${made.queued === 1 ? "delivery" : "deliveries"} queued.${made.alreadyMade > 0 ? ` ${made.alreadyMade} already made (or on the way) from the same print were not made again.` : ""}${made.printsQueued > 0 ? ` ${made.printsQueued} approved ${made.printsQueued === 1 ? "track had" : "tracks had"} no print yet: rendering it now; its files follow when it is done.` : ""}${made.leftOut > 0 ? ` ${made.leftOut} ${made.leftOut === 1 ? "track was" : "tracks were"} left out (see Tracks above).` : ""}`}
          />
        )}
        {deliveries.length === 0 ? (
          <p className="card px-5 py-8 text-center text-ink-soft">No deliveries yet.</p>
        ) : (
          <DataTable label="Deliveries" columns={[{ label: "Track" }, { label: "Format" }, { label: "State" }, { label: "Loudness" }, { label: "Warnings" }]}>
            {deliveries.map((d) => (
              <tr key={d.id}>
                <td>
                  <span className="num text-ink-soft">{d.position}.</span> {d.title}
                </td>
                <td>
                  {d.formatName}
                  {!d.formatKept && <span className="block text-xs text-ink-soft">format deleted or changed · not in the package</span>}
                </td>
                <td data-delivery-state={d.state}>{d.state}</td>
                <td className="num text-sm whitespace-nowrap">
                  {d.state === "done" ? (
                    <>
                      {fmt(d.integratedLufs, "LUFS")} <span className="text-ink-faint">· {fmt(d.truePeakDbtp, "dBTP")}</span>
                    </>
                  ) : (
                    "—"
                  )}
                </td>
                <td className="text-sm">{d.state === "failed" ? <span className="text-danger">{d.error}</span> : (d.warnings ?? []).length > 0 ? <span className="text-danger">{(d.warnings ?? []).join("; ")}</span> : d.state === "done" ? "none" : "—"}</td>
              </tr>
            ))}
          </DataTable>
        )}
      </section>
    </>
  );
}

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Deliveries · ${data?.release.title ?? "Release"} · Tidemark` }];
