import { Link } from "react-router";

export function PageHeader({ title, eyebrow, actions }: { title: string; eyebrow?: React.ReactNode; actions?: React.ReactNode }) {
  return (
    <div className="mb-6 flex flex-col gap-3 sm:flex-row sm:items-end sm:justify-between">
      <div className="min-w-0">
        {eyebrow && <p className="mb-1 text-sm text-ink-soft">{eyebrow}</p>}
        <h1 className="text-2xl font-semibold break-words sm:text-3xl">{title}</h1>
      </div>
      {actions && <div className="flex flex-wrap gap-2">{actions}</div>}
    </div>
  );
}

/** The "← parent" link above a page's header. */
export function BackLink({ to, children }: { to: string; children: React.ReactNode }) {
  return (
    <p className="mb-2 text-sm">
      <Link to={to} className="text-accent-deep underline-offset-4 hover:underline">
        ← {children}
      </Link>
    </p>
  );
}
