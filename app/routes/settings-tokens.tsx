// Personal API tokens: made with a name, shown once, revoked here. A token
// acts as its member, with the same rights as on the pages.
import { data, Form } from "react-router";
import type { Route } from "./+types/settings-tokens";
import { z } from "zod";
import { requireUser } from "../lib/auth.server.ts";
import { parseForm } from "../lib/forms.ts";
import { createApiToken, listApiTokens, revokeApiToken } from "../models/api-token.server.ts";
import { FormNotice, TextField } from "../components/field.tsx";
import { BackLink, PageHeader } from "../components/page-header.tsx";

const tokenNameSchema = z.object({ name: z.string().trim().min(1, "Name the token, e.g. where it is used").max(80, "At most 80 characters") });

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const tokens = await listApiTokens(user.id, user.studioId);
  return { tokens: tokens.map((t) => ({ id: t.id, name: t.name, createdAt: t.createdAt.toISOString(), lastUsedAt: t.lastUsedAt?.toISOString() ?? null })) };
}

type ActionResult = { intent: string; errors: Record<string, string | undefined>; values: Record<string, string>; token?: string; tokenName?: string; revoked?: boolean };

export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request);
  const form = await request.formData();
  const intent = String(form.get("intent") ?? "");
  if (intent === "revoke") {
    const revoked = await revokeApiToken(user.id, user.studioId, String(form.get("tokenId") ?? ""));
    if (!revoked) return data<ActionResult>({ intent, errors: { form: "That token does not exist or was already revoked." }, values: {} }, { status: 400 });
    return data<ActionResult>({ intent, errors: {}, values: {}, revoked: true });
  }
  const result = parseForm(tokenNameSchema, form);
  if (!result.ok) return data<ActionResult>({ intent: "create", errors: result.errors, values: result.values }, { status: 400 });
  const { token, apiToken } = await createApiToken({ userId: user.id, studioId: user.studioId, name: result.data.name });
  return data<ActionResult>({ intent: "create", errors: {}, values: {}, token, tokenName: apiToken.name });
}

const when = (iso: string | null) => (iso ? `${iso.slice(0, 16).replace("T", " ")} UTC` : "never");

export default function SettingsTokens({ loaderData, actionData }: Route.ComponentProps) {
  return (
    <>
      <BackLink to="/settings">Settings</BackLink>
      <PageHeader title="API tokens" />
      <p className="mb-4 max-w-2xl text-sm text-ink-soft">
        A token lets a script use the Tidemark API as you, with your rights. Send it as <code className="num">Authorization: Bearer &lt;token&gt;</code>. Only a
        fingerprint of it is kept, so it is shown once.
      </p>
      {actionData?.token && (
        <div className="card mb-6 max-w-2xl space-y-2 border-accent/40 p-4" role="status">
          <p className="text-sm font-medium">Token “{actionData.tokenName}” made. Copy it now; it will not be shown again:</p>
          <code className="num block rounded bg-paper-deep px-2 py-1 text-sm break-all" data-testid="new-token">
            {actionData.token}
          </code>
        </div>
      )}
      <FormNotice message={actionData?.revoked ? "Token revoked." : undefined} tone="info" />
      <FormNotice message={actionData?.errors.form} />
      {/* Keyed by the new token, so the name field empties once a token is made. */}
      <Form key={actionData?.token ?? "new"} method="post" noValidate className="card mb-8 max-w-xl space-y-4 p-5">
        <input type="hidden" name="intent" value="create" />
        <TextField label="Token name" name="name" defaultValue={actionData?.intent === "create" && !actionData.token ? actionData.values.name : ""} error={actionData?.errors.name} />
        <button type="submit" className="btn-primary">
          Make token
        </button>
      </Form>
      <h2 className="mb-2 text-lg font-semibold">Your tokens</h2>
      {loaderData.tokens.length === 0 ? (
        <p className="text-sm text-ink-soft">No tokens.</p>
      ) : (
        <ul className="max-w-2xl divide-y divide-rule rounded-md border border-rule bg-card">
          {loaderData.tokens.map((t) => (
            <li key={t.id} className="flex flex-wrap items-center justify-between gap-2 px-4 py-3">
              <div className="min-w-0">
                <p className="font-medium break-words">{t.name}</p>
                <p className="text-sm text-ink-soft">
                  made <span className="num">{when(t.createdAt)}</span> · last used <span className="num">{when(t.lastUsedAt)}</span>
                </p>
              </div>
              <Form method="post">
                <input type="hidden" name="intent" value="revoke" />
                <input type="hidden" name="tokenId" value={t.id} />
                <button type="submit" className="btn-quiet text-sm" aria-label={`Revoke ${t.name}`}>
                  Revoke
                </button>
              </Form>
            </li>
          ))}
        </ul>
      )}
    </>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "API tokens · Tidemark" }];
