import { RELEASE_STATUS_LABELS, type ReleaseStatus } from "../schemas/release.ts";

const TONES: Record<ReleaseStatus, string> = {
  intake: "bg-paper-deep text-ink-soft",
  mastering: "bg-accent-wash text-accent-deep",
  review: "bg-[#f3e7c9] text-[#6b4e0e]",
  approved: "bg-[#dde9d3] text-[#34521f]",
  delivered: "bg-ink text-card",
};

export function StatusBadge({ status }: { status: ReleaseStatus }) {
  return <span className={`inline-block rounded-full px-2.5 py-0.5 text-xs font-medium whitespace-nowrap ${TONES[status]}`}>{RELEASE_STATUS_LABELS[status]}</span>;
}
