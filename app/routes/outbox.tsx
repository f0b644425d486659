// The owner's view of the mail the studio sends: every outbox row with its
// state and attempts, and where the fake SMTP server is in use, what it caught.
import type { Route } from "./+types/outbox";
import { requireRole } from "../lib/auth.server.ts";
import { fakeInbox, listOutbox } from "../models/outbox.server.ts";
import { PageHeader } from "../components/page-header.tsx";
import { DataTable } from "../components/data-table.tsx";

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, ["owner"]);
  const rows = await listOutbox(user.studioId);
  const fake = await fakeInbox(new Set(rows.map((r) => r.to.toLowerCase())));
  return { rows, fake };
}

const when = (d: Date | string | null) => (d ? new Date(d).toISOString().replace("T", " ").slice(0, 19) + " UTC" : "—");

export default function Outbox({ loaderData }: Route.ComponentProps) {
  const { rows, fake } = loaderData;
  return (
    <>
      <PageHeader eyebrow="Studio" title="Outbox" />
      <p className="mb-4 text-sm text-ink-soft">Every e-mail the studio sends is written here first, then delivered; a failed attempt is retried later.</p>
      {rows.length === 0 ? (
        <p className="card px-5 py-8 text-center text-ink-soft">Nothing sent yet.</p>
      ) : (
        <DataTable
          label="Outbox"
          className="min-w-[44rem]"
          columns={[{ label: "To" }, { label: "Subject" }, { label: "Kind" }, { label: "State" }, { label: "Attempts", align: "right" }, { label: "Queued" }]}
        >
          {rows.map((r) => (
            <tr key={r.id} data-outbox-state={r.state}>
              <td className="whitespace-nowrap">{r.to}</td>
              <td>{r.subject}</td>
              <td className="text-ink-soft">{r.kind}</td>
              <td title={r.lastError ?? undefined}>
                {r.state}
                {r.lastError && <span className="block text-xs text-danger">{r.lastError}</span>}
              </td>
              <td className="num text-right">{r.attempts}</td>
              <td className="num whitespace-nowrap">{when(r.createdAt)}</td>
            </tr>
          ))}
        </DataTable>
      )}
      {fake && (
        <section aria-labelledby="fake-inbox" className="mt-8">
          <h2 id="fake-inbox" className="mb-2 text-lg font-semibold">
            Caught by the test mail server
          </h2>
          {fake.error && (
            <p role="alert" className="mb-2 text-sm text-danger">
              {fake.error}
            </p>
          )}
          {fake.messages.length === 0 ? (
            <p className="text-sm text-ink-soft">No messages held.</p>
          ) : (
            <ol className="space-y-3">
              {fake.messages.map((m) => (
                <li key={m.id} className="card p-3 text-sm" data-fake-message={m.id}>
                  <p>
                    <strong>{m.subject}</strong> → {m.to.join(", ")} <span className="num text-ink-soft">{when(m.receivedAt)}</span>
                  </p>
                  <details className="mt-1">
                    <summary className="cursor-pointer text-ink-soft">Text</summary>
                    <pre className="mt-1 text-xs whitespace-pre-wrap">{m.text}</pre>
                  </details>
                </li>
              ))}
            </ol>
          )}
        </section>
      )}
    </>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Outbox · Tidemark" }];
