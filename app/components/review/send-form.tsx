// "Send for review" for staff (render and compare pages): the message to the
// client, and — when the client has approved another master — the warning
// that sending this one asks them to review again, with a box to confirm it
// (the server refuses the step without it, see sendForReview).
import { Form } from "react-router";

export type SendWarning = { approvedVersion: number; version: number } | null;

export function SendForReviewForm({ renderId, clientName, warning, busy, label = "Send for review", children }: { renderId?: string; clientName?: string | null; warning: SendWarning; busy?: boolean; label?: string; children?: React.ReactNode }) {
  return (
    <Form method="post" className="space-y-2">
      <input type="hidden" name="intent" value="send" />
      {renderId && <input type="hidden" name="renderId" value={renderId} />}
      <label className="block text-sm">
        Message to {clientName ?? "the client"} (optional; shown above the player)
        <textarea name="message" rows={3} maxLength={4000} className="field-input mt-1" />
      </label>
      {warning && (
        <div role="note" className="rounded-md border border-accent bg-accent-wash p-3 text-sm" data-testid="send-warning">
          <p>
            The client approved <strong>version {warning.approvedVersion}</strong>. This is a different master (it becomes <strong>version {warning.version}</strong>): sending it asks
            them to review again, and nothing is delivered until they approve it or ask for changes and approve again.
          </p>
          <label className="mt-2 inline-flex items-center gap-2">
            <input type="checkbox" name="confirmNewReview" value="yes" required />
            Ask the client to review again
          </label>
        </div>
      )}
      <button type="submit" className="btn-primary" disabled={busy}>
        {label}
      </button>
      {children}
    </Form>
  );
}
