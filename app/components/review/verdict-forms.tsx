// The client's verdict on a render sent for review: approve it, or ask for
// changes with a note. Shared by the compare and review pages.
import { Form } from "react-router";

export function VerdictForms({ renderId, busy }: { renderId: string; busy: boolean }) {
  return (
    <>
      <Form method="post">
        <input type="hidden" name="intent" value="approve" />
        <input type="hidden" name="renderId" value={renderId} />
        <button type="submit" className="btn-primary" disabled={busy}>
          Approve this master
        </button>
      </Form>
      <Form method="post" className="space-y-2">
        <input type="hidden" name="intent" value="changes" />
        <input type="hidden" name="renderId" value={renderId} />
        <label className="block text-sm">
          What should change?
          <textarea name="note" rows={3} required maxLength={4000} className="field-input mt-1" />
        </label>
        <button type="submit" className="btn-quiet" disabled={busy}>
          Ask for changes
        </button>
      </Form>
    </>
  );
}
