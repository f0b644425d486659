import { data, Form, Link } from "react-router";
import type { Route } from "./+types/team";
import { requireRole } from "../lib/auth.server.ts";
import { parseForm, type FieldErrors } from "../lib/forms.ts";
import { clientInStudio, clientNameTaken, createClient, listClients } from "../models/client.server.ts";
import { publicAppUrl } from "../lib/billing/links.ts";
import { createInvitation, emailHasAccount, invitationLink, listPendingInvitations } from "../models/invitation.server.ts";
import { changeStaffRole, listMembers, removeMember, revokeMemberTokens } from "../models/team.server.ts";
import { clientSchema, INVITATION_DAYS, invitationSchema, memberSchema, roleChangeSchema } from "../schemas/team.ts";
import { FormNotice, SelectField, TextField } from "../components/field.tsx";
import { PageHeader } from "../components/page-header.tsx";
import { DataTable } from "../components/data-table.tsx";

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, ["owner"]);
  const [members, invitations, clients] = await Promise.all([listMembers(user.studioId), listPendingInvitations(user.studioId), listClients(user.studioId)]);
  return { members, invitations, clients, me: user.id };
}

type ActionResult = { intent: string; errors: FieldErrors; values: Record<string, string>; message?: string; inviteLink?: string };

export async function action({ request }: Route.ActionArgs) {
  const user = await requireRole(request, ["owner"]);
  const form = await request.formData();
  const intent = String(form.get("intent") ?? "");
  const fail = (result: Omit<ActionResult, "intent">) => data<ActionResult>({ intent, ...result }, { status: 400 });

  if (intent === "invite") {
    const result = parseForm(invitationSchema, form);
    if (!result.ok) return fail({ errors: result.errors, values: result.values });
    const values = { email: result.data.email, role: result.data.role, clientId: result.data.clientId ?? "" };
    if (result.data.clientId && !(await clientInStudio(user.studioId, result.data.clientId))) return fail({ errors: { clientId: "Choose which client this person belongs to" }, values });
    if (await emailHasAccount(result.data.email)) return fail({ errors: { email: "This e-mail already has a Tidemark account" }, values });
    // The invitation is e-mailed; the link is shown too, for passing on by hand.
    const { token } = await createInvitation({ studioId: user.studioId, invitedBy: user.id, ...result.data, publicUrl: publicAppUrl() });
    return data<ActionResult>({ intent, errors: {}, values: {}, inviteLink: invitationLink(new URL(request.url).origin, token) });
  }
  if (intent === "role") {
    const result = parseForm(roleChangeSchema, form);
    if (!result.ok) return fail({ errors: result.errors, values: result.values, message: result.errors.role ?? "Choose a role" });
    const changed = await changeStaffRole(user.studioId, result.data.membershipId, result.data.role);
    if (!changed.ok) return fail({ errors: {}, values: {}, message: changed.message });
    return data<ActionResult>({ intent, errors: {}, values: {}, message: "Role changed." });
  }
  if (intent === "remove" || intent === "revoke-tokens") {
    const result = parseForm(memberSchema, form);
    if (!result.ok) return fail({ errors: result.errors, values: result.values, message: "No such member" });
    if (intent === "revoke-tokens") {
      const count = await revokeMemberTokens(user.studioId, result.data.membershipId);
      if (count === undefined) return fail({ errors: {}, values: {}, message: "No such member" });
      return data<ActionResult>({ intent, errors: {}, values: {}, message: count === 1 ? "1 API token revoked." : `${count} API tokens revoked.` });
    }
    const removed = await removeMember(user.studioId, result.data.membershipId, user.id);
    if (!removed.ok) return fail({ errors: {}, values: {}, message: removed.message });
    return data<ActionResult>({ intent, errors: {}, values: {}, message: `${removed.name} removed; their sessions and API tokens here have ended.` });
  }
  if (intent === "client") {
    const result = parseForm(clientSchema, form);
    if (!result.ok) return fail({ errors: result.errors, values: result.values });
    if (await clientNameTaken(user.studioId, result.data.name)) return fail({ errors: { name: "A client of this name exists" }, values: result.data });
    await createClient(user.studioId, result.data);
    return data<ActionResult>({ intent, errors: {}, values: {}, message: `${result.data.name} added.` });
  }
  return fail({ errors: {}, values: {}, message: "Unknown request" });
}

const ROLE_LABELS = { owner: "Owner", engineer: "Engineer", client: "Client" } as const;

export default function Team({ loaderData, actionData }: Route.ComponentProps) {
  const { members, invitations, clients, me } = loaderData;
  const result = actionData as ActionResult | undefined;
  const invite = result?.intent === "invite" ? result : undefined;
  const client = result?.intent === "client" ? result : undefined;
  const role = result?.intent === "role" ? result : undefined;
  const manage = result?.intent === "remove" || result?.intent === "revoke-tokens" ? result : undefined;
  return (
    <>
      <PageHeader
        title="Team"
        eyebrow="People and clients of the studio"
        actions={
          <Link to="/outbox" className="btn-quiet">
            Outbox
          </Link>
        }
      />

      <section aria-labelledby="members-heading" className="mb-10">
        <h2 id="members-heading" className="mb-3 text-lg font-semibold">
          Members
        </h2>
        {role?.message && (
          <div className="mb-3">
            <FormNotice message={role.message} tone={Object.keys(role.errors).length === 0 && role.message === "Role changed." ? "info" : "danger"} />
          </div>
        )}
        {manage?.message && (
          <div className="mb-3">
            <FormNotice message={manage.message} tone={Object.keys(manage.errors).length === 0 && !manage.message.startsWith("No such") && !manage.message.startsWith("You cannot") && !manage.message.startsWith("The studio") ? "info" : "danger"} />
          </div>
        )}
        <DataTable label="Members" columns={[{ label: "Name" }, { label: "E-mail", className: "hidden sm:table-cell" }, { label: "Role" }, { label: "Access" }]}>
          {members.map((member) => (
            <tr key={member.membershipId}>
              <td>
                <span className="font-medium">{member.name}</span>
                <span className="block text-sm break-all text-ink-soft sm:hidden">{member.email}</span>
              </td>
              <td className="hidden break-all sm:table-cell">{member.email}</td>
              <td>
                {member.role === "client" ? (
                  <span>Client · {member.clientName}</span>
                ) : (
                  <Form method="post" className="flex flex-wrap items-center gap-2">
                    <input type="hidden" name="intent" value="role" />
                    <input type="hidden" name="membershipId" value={member.membershipId} />
                    <select name="role" defaultValue={member.role} aria-label={`Role of ${member.name}`} className="field-input w-36 py-1">
                      <option value="owner">Owner</option>
                      <option value="engineer">Engineer</option>
                    </select>
                    <button type="submit" className="btn-quiet px-3">
                      Change
                    </button>
                    {member.userId === me && <span className="text-xs text-ink-faint">(you)</span>}
                  </Form>
                )}
              </td>
              <td>
                {member.userId !== me && (
                  <div className="flex flex-wrap items-center gap-2">
                    {member.liveTokens > 0 && (
                      <Form method="post">
                        <input type="hidden" name="intent" value="revoke-tokens" />
                        <input type="hidden" name="membershipId" value={member.membershipId} />
                        <button type="submit" className="btn-quiet px-3" aria-label={`Revoke the API tokens of ${member.name}`}>
                          Revoke {member.liveTokens === 1 ? "1 token" : `${member.liveTokens} tokens`}
                        </button>
                      </Form>
                    )}
                    <Form
                      method="post"
                      onSubmit={(event) => {
                        if (!window.confirm(`Remove ${member.name} from the studio? Their sessions and API tokens end at once.`)) event.preventDefault();
                      }}
                    >
                      <input type="hidden" name="intent" value="remove" />
                      <input type="hidden" name="membershipId" value={member.membershipId} />
                      <button type="submit" className="btn-quiet px-3 text-danger" aria-label={`Remove ${member.name}`}>
                        Remove
                      </button>
                    </Form>
                  </div>
                )}
              </td>
            </tr>
          ))}
        </DataTable>
      </section>

      <div className="grid gap-8 lg:grid-cols-2">
        <section aria-labelledby="invite-heading">
          <h2 id="invite-heading" className="mb-3 text-lg font-semibold">
            Invite someone
          </h2>
          <Form key={invite?.inviteLink ?? "invite"} method="post" className="card space-y-4 p-5" noValidate>
            <input type="hidden" name="intent" value="invite" />
            <TextField label="E-mail" name="email" type="email" defaultValue={invite?.values.email} error={invite?.errors.email} required />
            <div className="grid gap-4 sm:grid-cols-2">
              <SelectField
                label="Role"
                name="role"
                defaultValue={invite?.values.role ?? "engineer"}
                options={[
                  { value: "engineer", label: ROLE_LABELS.engineer },
                  { value: "client", label: ROLE_LABELS.client },
                ]}
                error={invite?.errors.role}
              />
              <SelectField
                label="Client (for client members)"
                name="clientId"
                defaultValue={invite?.values.clientId}
                placeholder="—"
                options={clients.map((c) => ({ value: c.id, label: c.name }))}
                error={invite?.errors.clientId}
              />
            </div>
            <button type="submit" className="btn-primary">
              Create invitation
            </button>
            {invite?.inviteLink && (
              <div className="rounded-md border border-accent/30 bg-accent-wash p-3 text-sm" role="status">
                <p className="font-medium text-accent-deep">Invitation created and e-mailed. You can also pass on this link; it works once, for {INVITATION_DAYS} days:</p>
                <p className="num mt-2 break-all select-all" data-testid="invite-link">
                  {invite.inviteLink}
                </p>
              </div>
            )}
          </Form>
          {invitations.length > 0 && (
            <div className="mt-4">
              <h3 className="mb-2 text-sm font-semibold text-ink-soft">Waiting to be accepted</h3>
              <ul className="card divide-y divide-rule/70" aria-label="Pending invitations">
                {invitations.map((inv) => (
                  <li key={inv.id} className="px-4 py-3">
                    <p className="font-medium break-all">{inv.email}</p>
                    <p className="text-sm text-ink-soft">
                      {ROLE_LABELS[inv.role]}
                      {inv.clientName && ` · ${inv.clientName}`} · until <span className="num">{inv.expiresAt}</span>
                    </p>
                  </li>
                ))}
              </ul>
            </div>
          )}
        </section>

        <section aria-labelledby="clients-heading">
          <h2 id="clients-heading" className="mb-3 text-lg font-semibold">
            Clients
          </h2>
          <ul className="card mb-4 divide-y divide-rule/70">
            {clients.length === 0 && <li className="px-4 py-3 text-ink-soft">No clients yet.</li>}
            {clients.map((c) => (
              <li key={c.id} className="flex justify-between px-4 py-3">
                <span className="font-medium">{c.name}</span>
                <span className="text-sm text-ink-soft">{c.kind === "artist" ? "Artist" : "Label"}</span>
              </li>
            ))}
          </ul>
          <Form key={client?.message ?? "client"} method="post" className="card space-y-4 p-5" noValidate>
            <input type="hidden" name="intent" value="client" />
            <FormNotice message={client?.message && Object.keys(client.errors).length === 0 ? client.message : undefined} tone="info" />
            <div className="grid gap-4 sm:grid-cols-[1fr_10rem]">
              <TextField label="Client name" name="name" defaultValue={client?.values.name} error={client?.errors.name} required />
              <SelectField
                label="Kind"
                name="kind"
                defaultValue={client?.values.kind ?? "artist"}
                options={[
                  { value: "artist", label: "Artist" },
                  { value: "label", label: "Label" },
                ]}
                error={client?.errors.kind}
              />
            </div>
            <button type="submit" className="btn-quiet">
              Add client
            </button>
          </Form>
        </section>
      </div>
    </>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Team · Tidemark" }];
