// One shell for the app's tables: the frame that scrolls sideways on a narrow
// screen, the table with its accessible name, and the header row. The rows
// are the caller's own <tr> elements.
import type { ReactNode } from "react";

export type DataColumn = {
  label: ReactNode;
  /** Read out by screen readers, not shown (e.g. a column of buttons). */
  hiddenLabel?: boolean;
  align?: "right";
  className?: string;
  title?: string;
};

/** Default frame: a card that scrolls sideways; "bare": no card (inside a section that already is one); "none": only frameClassName. */
const FRAMES = { card: "card overflow-x-auto", bare: "relative max-w-full overflow-x-auto", none: "" } as const;

function classes(...parts: (string | false | undefined)[]): string | undefined {
  const joined = parts.filter(Boolean).join(" ");
  return joined || undefined;
}

export function DataTable({
  label,
  columns,
  children,
  frame = "card",
  frameClassName,
  className,
  headClassName,
}: {
  /** The table's accessible name (tests and screen readers find it by this). */
  label: string;
  /** Header cells in order; `false` leaves a column out (a conditional column). */
  columns: (DataColumn | false)[];
  children: ReactNode;
  frame?: keyof typeof FRAMES;
  /** Added to the frame's classes (spacing; with frame "none", the whole frame). */
  frameClassName?: string;
  className?: string;
  headClassName?: string;
}) {
  return (
    <div className={classes(FRAMES[frame], frameClassName)}>
      <table className={classes("data-table", className)} aria-label={label}>
        <thead className={headClassName}>
          <tr>
            {columns.map((c, i) =>
              c ? (
                <th key={i} scope="col" className={classes(c.align === "right" && "text-right", c.className)} title={c.title}>
                  {c.hiddenLabel ? <span className="sr-only">{c.label}</span> : c.label}
                </th>
              ) : null,
            )}
          </tr>
        </thead>
        <tbody>{children}</tbody>
      </table>
    </div>
  );
}
