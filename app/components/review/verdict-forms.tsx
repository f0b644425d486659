// The client's verdict on the version sent for review: approve it, or ask for
// changes with a note. Shared by the review room and the compare page. The
// words say what an approval means: the final files are made from exactly the
// settings of the master heard (app/lib/review/state.ts).
import { Form } from "react-router";

export function VerdictForms({ renderId, busy }: { renderId: string; busy: boolean }) {
  return (
    <>
      <Form method="post" className="space-y-2">
        <input type="hidden" name="intent" value="approve" />
        <input type="hidden" name="renderId" value={renderId} />
        <p className="text-sm" id={`approve-means-${renderId}`}>
          You approve this master. The final files are made from exactly these settings.
        </p>
        <button type="submit" className="btn-primary" disabled={busy} aria-describedby={`approve-means-${renderId}`}>
          Approve
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
