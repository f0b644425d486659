// Sign-in tries in the last minute. The limit is keyed by e-mail and client
// address together (failures from one address never lock the account for
// another), plus a wider one per address (one address spraying many e-mails).
// Each try is recorded before it is judged, and judged by counting rows that
// include itself, so concurrent tries cannot all slip under the limit.
import { db } from "../lib/db.server.ts";

/** Tries a minute for one e-mail from one address. */
export const SIGN_IN_LIMIT = 10;
/** Tries a minute from one address, whatever the e-mail. */
export const SIGN_IN_ADDRESS_LIMIT = 40;
export const SIGN_IN_WINDOW_SECONDS = 60;

const since = () => db.raw(`now() - make_interval(secs => ?)`, [SIGN_IN_WINDOW_SECONDS]);

/** Records a try; false when this e-mail from this address, or this address, is over its limit. */
export async function admitSignInAttempt(email: string, address: string | null): Promise<boolean> {
  await db("sign_in_attempts").insert({ email, address });
  const [pair] = await db("sign_in_attempts").where({ email, address }).andWhere("created_at", ">", since()).count<{ count: string }[]>("* as count");
  if (Number(pair.count) > SIGN_IN_LIMIT) return false;
  if (!address) return true;
  const [byAddress] = await db("sign_in_attempts").where({ address }).andWhere("created_at", ">", since()).count<{ count: string }[]>("* as count");
  return Number(byAddress.count) <= SIGN_IN_ADDRESS_LIMIT;
}

/** A successful sign-in forgets the tries of that e-mail from that address. */
export async function clearSignInAttempts(email: string, address: string | null): Promise<void> {
  await db("sign_in_attempts").where({ email, address }).delete();
  // Old rows serve no purpose; pruning here keeps the table small without a job.
  await db("sign_in_attempts").where("created_at", "<", db.raw(`now() - interval '1 day'`)).delete();
}
