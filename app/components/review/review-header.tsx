// The heading of a track's review and compare pages: the release, the
// track's review status, the page title, and the last action's error.
import { FormNotice } from "../field.tsx";
import { PageHeader } from "../page-header.tsx";
import { REVIEW_STATUS_LABEL, type ReviewStatus } from "../../lib/review/state.ts";

export function ReviewHeader({ releaseTitle, status, title, error }: { releaseTitle: string; status: ReviewStatus; title: string; error: string | null | undefined }) {
  return (
    <>
      <PageHeader
        eyebrow={
          <>
            {releaseTitle} · review: <span data-testid="review-status">{REVIEW_STATUS_LABEL[status]}</span>
          </>
        }
        title={title}
      />
      {error && (
        <div className="mb-4">
          <FormNotice message={error} />
        </div>
      )}
    </>
  );
}
