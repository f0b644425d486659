// The studio template once called "Open and loud" is "Hot and dense" (a hot,
// dense master in the trade's words; a name of our own): saturation, a 2.5:1
// bus compressor, shelves up, a −9 LUFS target. A studio that already has a
// template of the new name keeps both as they are.
import type { Knex } from "knex";

const OLD_NAME = "Open and loud";
const NEW_NAME = "Hot and dense";

export async function up(knex: Knex): Promise<void> {
  await knex.raw(
    `UPDATE chains c SET name = ?, updated_at = now()
      WHERE c.track_id IS NULL AND c.name = ?
        AND NOT EXISTS (SELECT 1 FROM chains o WHERE o.studio_id = c.studio_id AND o.track_id IS NULL AND o.name = ?)`,
    [NEW_NAME, OLD_NAME, NEW_NAME],
  );
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw(
    `UPDATE chains c SET name = ?, updated_at = now()
      WHERE c.track_id IS NULL AND c.name = ?
        AND NOT EXISTS (SELECT 1 FROM chains o WHERE o.studio_id = c.studio_id AND o.track_id IS NULL AND o.name = ?)`,
    [OLD_NAME, NEW_NAME, OLD_NAME],
  );
}
