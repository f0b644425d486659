// Keyset paging in SQL, newest first by (timestamp, id): a page starts after
// the cursor row, whose position is read from the row itself so timestamps
// keep their microseconds. One row more than the page says whether another follows.
import type { Knex } from "knex";

export type Page = { limit: number; after?: string };

export function keysetPage(query: Knex.QueryBuilder, page: Page, keys: { table: string; at: string; id: string; column: string }): Knex.QueryBuilder {
  query.clearOrder().orderBy(keys.at, "desc").orderBy(keys.id, "desc").limit(page.limit + 1);
  if (page.after) query.whereRaw(`(${keys.at}, ${keys.id}) < (SELECT c.${keys.column}, c.id FROM ${keys.table} c WHERE c.id = ?)`, [page.after]);
  return query;
}
