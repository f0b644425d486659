// Failed sign-ins in the last minute, per e-mail and per address; past the
// limit, sign-in is refused until the window has moved on.
import { db } from "../lib/db.server.ts";

export const SIGN_IN_LIMIT = 10;
export const SIGN_IN_WINDOW_SECONDS = 60;

export async function isSignInThrottled(email: string, address: string | null): Promise<boolean> {
  const since = db.raw(`now() - make_interval(secs => ?)`, [SIGN_IN_WINDOW_SECONDS]);
  const byEmail = await db("sign_in_attempts").where("email", email).andWhere("created_at", ">", since).count<{ count: string }[]>("* as count");
  if (Number(byEmail[0].count) >= SIGN_IN_LIMIT) return true;
  if (!address) return false;
  const byAddress = await db("sign_in_attempts").where("address", address).andWhere("created_at", ">", since).count<{ count: string }[]>("* as count");
  return Number(byAddress[0].count) >= SIGN_IN_LIMIT;
}

export async function recordFailedSignIn(email: string, address: string | null): Promise<void> {
  await db("sign_in_attempts").insert({ email, address });
  // Old rows serve no purpose; pruning here keeps the table small without a job.
  await db("sign_in_attempts").where("created_at", "<", db.raw(`now() - interval '1 day'`)).delete();
}

export async function clearFailedSignIns(email: string): Promise<void> {
  await db("sign_in_attempts").where("email", email).delete();
}
