import { data, Form, redirect } from "react-router";
import type { Route } from "./+types/invitation";
import { createUserSession, getUser } from "../lib/auth.server.ts";
import { notFound } from "../lib/http.server.ts";
import { parseForm, type FieldErrors } from "../lib/forms.ts";
import { acceptInvitation, emailHasAccount, findOpenInvitation } from "../models/invitation.server.ts";
import { acceptInvitationSchema } from "../schemas/team.ts";
import { FormNotice, TextField } from "../components/field.tsx";

export async function loader({ request, params }: Route.LoaderArgs) {
  const invitation = await findOpenInvitation(params.token);
  if (!invitation) throw notFound();
  if (await getUser(request)) throw redirect("/");
  return {
    studioName: invitation.studioName,
    email: invitation.email,
    role: invitation.role,
    accountExists: await emailHasAccount(invitation.email),
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  if (!(await findOpenInvitation(params.token))) throw notFound();
  // Someone signed in is not the invitee's new account; same answer as the page.
  if (await getUser(request)) throw redirect("/");
  const result = parseForm(acceptInvitationSchema, await request.formData());
  if (!result.ok) {
    const { password: _p, confirm: _c, ...values } = result.values;
    return data({ errors: result.errors, values: values as Record<string, string>, message: null as string | null }, { status: 400 });
  }
  const accepted = await acceptInvitation(params.token, { name: result.data.name, password: result.data.password });
  if (!accepted.ok) return data({ errors: {} as FieldErrors, values: { name: result.data.name } as Record<string, string>, message: accepted.message }, { status: 409 });
  return createUserSession(request, { userId: accepted.userId, studioId: accepted.studioId }, "/");
}

export default function Invitation({ loaderData, actionData }: Route.ComponentProps) {
  const errors = actionData?.errors ?? {};
  return (
    <main className="flex min-h-screen items-center justify-center px-4 py-10">
      <div className="card w-full max-w-md p-6">
        <p className="text-sm font-semibold tracking-wide text-accent uppercase">Tidemark</p>
        <h1 className="mt-1 text-xl font-semibold">Join {loaderData.studioName}</h1>
        <p className="mt-2 text-sm text-ink-soft">
          You are invited as {loaderData.role === "engineer" ? "an engineer" : "a client"} with the e-mail{" "}
          <strong className="font-medium text-ink">{loaderData.email}</strong>. Choose your name and a password.
        </p>
        {loaderData.accountExists ? (
          <div className="mt-5">
            <FormNotice message="An account with this e-mail already exists. Sign in instead." />
          </div>
        ) : (
          <Form method="post" className="mt-6 space-y-4" noValidate>
            <FormNotice message={actionData?.message ?? undefined} />
            <TextField label="Your name" name="name" autoComplete="name" defaultValue={actionData?.values.name} error={errors.name} required />
            <TextField label="Password" name="password" type="password" autoComplete="new-password" hint="At least 10 characters" error={errors.password} required />
            <TextField label="Password again" name="confirm" type="password" autoComplete="new-password" error={errors.confirm} required />
            <button type="submit" className="btn-primary w-full">
              Accept and sign in
            </button>
          </Form>
        )}
      </div>
    </main>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Invitation · Tidemark" }];
