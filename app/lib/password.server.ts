// Password hashing with bcrypt; cost 10 is the floor the project accepts.
import bcrypt from "bcryptjs";

export const BCRYPT_COST = 10;

export function hashPassword(password: string): Promise<string> {
  return bcrypt.hash(password, BCRYPT_COST);
}

export function verifyPassword(password: string, hash: string): Promise<boolean> {
  return bcrypt.compare(password, hash);
}

// Compared against when the e-mail is unknown, so both cases cost the same time.
const unknownUserHash = bcrypt.hashSync("tidemark-no-such-user", BCRYPT_COST);

export async function burnPasswordCheck(password: string): Promise<void> {
  await bcrypt.compare(password, unknownUserHash);
}
