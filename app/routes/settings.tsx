import { data, Form, Link } from "react-router";
import type { Route } from "./+types/settings";
import { z } from "zod";
import { currentSession, requireRole, requireUser } from "../lib/auth.server.ts";
import { changePassword } from "../models/user.server.ts";
import { passwordChangeSchema } from "../schemas/password.ts";
import { parseForm } from "../lib/forms.ts";
import { renameStudio } from "../models/studio.server.ts";
import { updateUserName } from "../models/user.server.ts";
import { FormNotice, TextField } from "../components/field.tsx";
import { PageHeader } from "../components/page-header.tsx";

const nameSchema = z.object({ name: z.string().trim().min(1, "Enter a name").max(120, "At most 120 characters") });

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  return { name: user.name, email: user.email, studioName: user.studioName, owner: user.role === "owner" };
}

export async function action({ request }: Route.ActionArgs) {
  // Who is asking is settled before the body is read.
  const signedIn = await requireUser(request);
  const form = await request.formData();
  const intent = String(form.get("intent") ?? "");
  if (intent === "password") {
    const parsed = parseForm(passwordChangeSchema, form);
    if (!parsed.ok) return data({ intent, errors: parsed.errors, values: {} as Record<string, string>, saved: false }, { status: 400 });
    const session = await currentSession(request);
    // Every other session of this user ends (other browsers, other studios); this one stays.
    const changed = await changePassword(signedIn.id, parsed.data.current, parsed.data.password, session?.idHash);
    if (!changed) return data({ intent, errors: { current: "That is not your current password" } as Record<string, string>, values: {} as Record<string, string>, saved: false }, { status: 400 });
    return { intent, errors: {} as Record<string, string>, values: {} as Record<string, string>, saved: true };
  }
  // Renaming the studio is the owner's; anyone may rename themselves.
  const user = intent === "studio" ? await requireRole(request, ["owner"]) : signedIn;
  const result = parseForm(nameSchema, form);
  if (!result.ok) return data({ intent, errors: result.errors, values: result.values, saved: false }, { status: 400 });
  if (intent === "studio") await renameStudio(user.studioId, result.data.name);
  else await updateUserName(user.id, result.data.name);
  return { intent, errors: {} as Record<string, string>, values: {} as Record<string, string>, saved: true };
}

export default function Settings({ loaderData, actionData }: Route.ComponentProps) {
  const mine = actionData?.intent === "profile" ? actionData : undefined;
  const studio = actionData?.intent === "studio" ? actionData : undefined;
  const password = actionData?.intent === "password" ? actionData : undefined;
  return (
    <>
      <PageHeader title="Settings" />
      <div className="grid max-w-4xl gap-6 md:grid-cols-2">
        <Form method="post" className="card space-y-4 p-5" noValidate>
          <h2 className="text-lg font-semibold">You</h2>
          <input type="hidden" name="intent" value="profile" />
          <FormNotice message={mine?.saved ? "Saved." : undefined} tone="info" />
          <TextField label="Your name" name="name" defaultValue={mine?.values.name ?? loaderData.name} error={mine?.errors.name} />
          <p className="text-sm text-ink-soft">
            Signed in as <span className="break-all">{loaderData.email}</span>
          </p>
          <button type="submit" className="btn-quiet">
            Save
          </button>
        </Form>
        <Form method="post" className="card space-y-4 p-5" noValidate key={password?.saved ? "saved" : "form"}>
          <h2 className="text-lg font-semibold">Password</h2>
          <input type="hidden" name="intent" value="password" />
          <FormNotice message={password?.saved ? "Password changed. You are signed out everywhere else." : undefined} tone="info" />
          <TextField label="Current password" name="current" type="password" autoComplete="current-password" error={password?.errors.current} />
          <TextField label="New password" name="password" type="password" autoComplete="new-password" error={password?.errors.password} />
          <TextField label="New password again" name="confirm" type="password" autoComplete="new-password" error={password?.errors.confirm} />
          <p className="text-sm text-ink-soft">Changing it signs you out of every other browser and device.</p>
          <button type="submit" className="btn-quiet">
            Change password
          </button>
        </Form>
        {loaderData.owner && (
          <Form method="post" className="card space-y-4 p-5" noValidate>
            <h2 className="text-lg font-semibold">Studio</h2>
            <input type="hidden" name="intent" value="studio" />
            <FormNotice message={studio?.saved ? "Saved." : undefined} tone="info" />
            <TextField label="Studio name" name="name" defaultValue={studio?.values.name ?? loaderData.studioName} error={studio?.errors.name} />
            <button type="submit" className="btn-quiet">
              Save
            </button>
          </Form>
        )}
      </div>
      <p className="mt-6 text-sm">
        <Link to="/settings/tokens" className="text-accent-deep underline-offset-4 hover:underline">
          API tokens
        </Link>{" "}
        <span className="text-ink-soft">for scripts that use the Tidemark API as you.</span>
      </p>
      {loaderData.owner && (
        <p className="mt-2 text-sm">
          <Link to="/settings/billing" className="text-accent-deep underline-offset-4 hover:underline">
            Rates and streaming references
          </Link>{" "}
          <span className="text-ink-soft">for invoices and the loudness report.</span>
        </p>
      )}
    </>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Settings · Tidemark" }];
