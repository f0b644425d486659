// The API side of paging its lists: `?limit=` (1–200) and `?after=<id>`, the
// last id of the previous page, checked here; the SQL is keyset.server.ts.
import { z } from "zod";
import { apiError, fieldErrorsOf } from "./api.server.ts";
import { db } from "./db.server.ts";
import type { Page } from "./keyset.server.ts";

export const MAX_PAGE = 200;

const pageSchema = z.object({
  limit: z.coerce.number().int("must be a whole number").min(1, "must be at least 1").max(MAX_PAGE, `must be at most ${MAX_PAGE}`).default(100),
  after: z.uuid({ message: "must be an id from the previous page's nextAfter" }).optional(),
});

/**
 * The page asked for in the URL, its cursor a row of `table` that still
 * exists (a deleted one cannot say where to go on); else throws a 400 with
 * field errors.
 */
export async function requestedPage(url: URL, table: string): Promise<Page> {
  const parsed = pageSchema.safeParse({ limit: url.searchParams.get("limit") ?? undefined, after: url.searchParams.get("after") ?? undefined });
  if (!parsed.success) throw apiError(400, "The page is not valid", fieldErrorsOf(parsed.error.issues));
  const page = parsed.data;
  if (page.after && !(await db(table).where({ id: page.after }).first("id"))) {
    throw apiError(400, "The page is not valid", { after: "names no row any more; start again without it" });
  }
  return page;
}

/** The page's rows and the cursor of the next page (null on the last). */
export function pageOf<T extends { id: string }>(rows: T[], page: Page): { items: T[]; nextAfter: string | null } {
  const items = rows.slice(0, page.limit);
  return { items, nextAfter: rows.length > page.limit ? items[items.length - 1].id : null };
}
