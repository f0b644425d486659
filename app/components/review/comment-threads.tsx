// The comment threads of a render or a mix, with replies and resolve/reopen;
// shared by the compare and review pages, whose actions take the same intents.
import { Form } from "react-router";
import { formatClock } from "../../lib/format.ts";

export type ThreadView = {
  id: string;
  timeS: number;
  body: string;
  authorName: string | null;
  resolvedAt: string | Date | null;
  replies: { id: string; body: string; authorName: string | null }[];
};

export type CommentTargetView = { renderId: string } | { mixId: string };

/** The hidden field that names what a comment form posts about. */
export function TargetInputs({ target }: { target: CommentTargetView }) {
  return "renderId" in target ? <input type="hidden" name="renderId" value={target.renderId} /> : <input type="hidden" name="mixId" value={target.mixId} />;
}

export function CommentThreads({ comments, target, busy, onSeek }: { comments: ThreadView[]; target: CommentTargetView; busy: boolean; onSeek?: (timeS: number) => void }) {
  return (
    <ol className="space-y-3">
      {comments.map((thread) => (
        <li key={thread.id} className={`card p-3 text-sm ${thread.resolvedAt ? "opacity-70" : ""}`} data-comment={thread.id}>
          <p>
            {onSeek ? (
              <button type="button" className="num text-accent-deep underline-offset-4 hover:underline" onClick={() => onSeek(thread.timeS)}>
                {formatClock(thread.timeS)}
              </button>
            ) : (
              <span className="num text-accent-deep">{formatClock(thread.timeS)}</span>
            )}{" "}
            · <strong>{thread.authorName ?? "Someone"}</strong>
            {thread.resolvedAt && <span className="ml-2 text-xs text-ink-soft">resolved</span>}
          </p>
          <p className="mt-1 whitespace-pre-line">{thread.body}</p>
          {thread.replies.map((r) => (
            <p key={r.id} className="mt-2 border-l-2 border-rule pl-3 whitespace-pre-line">
              <strong>{r.authorName ?? "Someone"}</strong>: {r.body}
            </p>
          ))}
          <div className="mt-2 flex flex-wrap gap-2">
            <Form method="post" className="flex flex-1 gap-2">
              <input type="hidden" name="intent" value="comment" />
              <TargetInputs target={target} />
              <input type="hidden" name="parentId" value={thread.id} />
              <input name="body" required aria-label="Reply" placeholder="Reply" className="field-input" />
              <button type="submit" className="btn-quiet" disabled={busy}>
                Reply
              </button>
            </Form>
            <Form method="post">
              <input type="hidden" name="intent" value={thread.resolvedAt ? "reopen" : "resolve"} />
              <input type="hidden" name="commentId" value={thread.id} />
              <button type="submit" className="btn-quiet" disabled={busy}>
                {thread.resolvedAt ? "Reopen" : "Resolve"}
              </button>
            </Form>
          </div>
        </li>
      ))}
    </ol>
  );
}
