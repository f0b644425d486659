// The demo: an invented independent mastering studio with an owner, an
// engineer, an artist and a small label as clients, an EP of four tracks and
// a single. Every name is made up; addresses use the reserved .test domain.
import bcrypt from "bcryptjs";
import type { Knex } from "knex";

export const DEMO_PASSWORD = "tidemark-demo";

export const DEMO_ACCOUNTS = {
  owner: { email: "owner@lanternquay.test", name: "Maren Osei" },
  engineer: { email: "engineer@lanternquay.test", name: "Teodor Vallis" },
  artist: { email: "mirelle@quane.test", name: "Mirelle Quane" },
  label: { email: "desk@thimblewick.test", name: "Priya Holloway" },
} as const;

export async function seed(knex: Knex): Promise<void> {
  // Run only on an empty database (scripts/migrate.ts checks); one transaction so it is all or nothing.
  await knex.transaction(async (trx) => {
    const passwordHash = await bcrypt.hash(DEMO_PASSWORD, 10);
    const [studio] = await trx("studios").insert({ name: "Lantern Quay Mastering" }).returning("id");
    const [artist, label] = await trx("clients")
      .insert([
        { studio_id: studio.id, name: "Mirelle Quane", kind: "artist" },
        { studio_id: studio.id, name: "Thimblewick Records", kind: "label" },
      ])
      .returning("id");

    const users = await trx("users")
      .insert(Object.values(DEMO_ACCOUNTS).map((account) => ({ email: account.email, name: account.name, password_hash: passwordHash })))
      .returning(["id", "email"]);
    const idOf = (email: string) => users.find((u) => u.email === email).id;
    await trx("memberships").insert([
      { user_id: idOf(DEMO_ACCOUNTS.owner.email), studio_id: studio.id, role: "owner" },
      { user_id: idOf(DEMO_ACCOUNTS.engineer.email), studio_id: studio.id, role: "engineer" },
      { user_id: idOf(DEMO_ACCOUNTS.artist.email), studio_id: studio.id, role: "client", client_id: artist.id },
      { user_id: idOf(DEMO_ACCOUNTS.label.email), studio_id: studio.id, role: "client", client_id: label.id },
    ]);

    const [ep, single] = await trx("releases")
      .insert([
        { studio_id: studio.id, client_id: artist.id, title: "Lowlight Weather", kind: "ep", status: "mastering", due_on: "2027-02-12" },
        { studio_id: studio.id, client_id: label.id, title: "Glasshouse Signal", kind: "single", status: "review", due_on: "2027-01-22" },
      ])
      .returning("id");
    await trx("tracks").insert([
      { release_id: ep.id, position: 1, title: "Tin Roof Morning", isrc: "ZZTDM2600001" },
      { release_id: ep.id, position: 2, title: "Cartographer", isrc: "ZZTDM2600002" },
      { release_id: ep.id, position: 3, title: "Slow Ferry", isrc: "ZZTDM2600003" },
      { release_id: ep.id, position: 4, title: "Lowlight Weather", isrc: null },
      { release_id: single.id, position: 1, title: "Glasshouse Signal", isrc: "ZZTDM2600010" },
    ]);
  });
}
