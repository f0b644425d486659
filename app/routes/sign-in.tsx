import { data, Form, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/sign-in";
import { authenticator, createUserSession, getUser, safeRedirectPath, SignInError } from "../lib/auth.server.ts";
import { FormNotice, TextField } from "../components/field.tsx";

export async function loader({ request }: Route.LoaderArgs) {
  if (await getUser(request)) throw redirect("/");
  const redirectTo = safeRedirectPath(new URL(request.url).searchParams.get("redirectTo"));
  return { redirectTo };
}

export async function action({ request }: Route.ActionArgs) {
  const form = await request.clone().formData();
  const email = String(form.get("email") ?? "");
  const redirectTo = safeRedirectPath(form.get("redirectTo"));
  try {
    const signedIn = await authenticator.authenticate("password", request);
    return createUserSession(request, signedIn, redirectTo);
  } catch (error) {
    if (error instanceof SignInError) {
      return data({ message: error.message, field: error.field ?? null, email }, { status: error.status });
    }
    throw error;
  }
}

export default function SignIn({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const busy = navigation.state === "submitting";
  return (
    <main className="flex min-h-screen items-center justify-center px-4 py-10">
      <div className="w-full max-w-sm">
        <div className="mb-8 flex items-center gap-3">
          <img src="/favicon.svg" alt="" className="h-9 w-9" />
          <span className="text-xl font-semibold tracking-tight">Tidemark</span>
        </div>
        <div className="card p-6 shadow-[0_1px_0_rgba(29,31,36,0.04)]">
          <h1 className="text-xl font-semibold">Sign in</h1>
          <p className="mt-1 text-sm text-ink-soft">Your studio workspace: releases, tracks and reviews.</p>
          <Form method="post" className="mt-6 space-y-4" noValidate>
            <input type="hidden" name="redirectTo" value={loaderData.redirectTo} />
            <FormNotice message={actionData && !actionData.field ? actionData.message : undefined} />
            <TextField
              label="E-mail"
              name="email"
              type="email"
              autoComplete="email"
              defaultValue={actionData?.email}
              error={actionData?.field === "email" ? actionData.message : undefined}
              required
            />
            <TextField
              label="Password"
              name="password"
              type="password"
              autoComplete="current-password"
              error={actionData?.field === "password" ? actionData.message : undefined}
              required
            />
            <button type="submit" className="btn-primary w-full" disabled={busy}>
              {busy ? "Signing in…" : "Sign in"}
            </button>
          </Form>
        </div>
        <p className="mt-6 text-center text-sm text-ink-faint">New here? Your studio sends you an invitation link.</p>
      </div>
    </main>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Sign in · Tidemark" }];
