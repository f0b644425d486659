// Sign-in (remix-auth with a form strategy) and the checks every loader and
// action goes through: requireUser, requireRole, requireReleaseAccess.
import { redirect } from "react-router";
import { Authenticator } from "remix-auth";
import { FormStrategy } from "remix-auth-form";
import { signInSchema } from "../schemas/sign-in.ts";
import { getCurrentUser, findUserForSignIn, membershipStudioForRelease, normalizeEmail, type CurrentUser } from "../models/user.server.ts";
import { isUuid } from "./ids.ts";
import { clearFailedSignIns, isSignInThrottled, recordFailedSignIn } from "../models/sign-in-attempt.server.ts";
import { getReleaseForUser, type ReleaseDetail } from "../models/release.server.ts";
import { burnPasswordCheck, verifyPassword } from "./password.server.ts";
import { getSession, sessionStorage } from "./session.server.ts";
import { env } from "./env.server.ts";
import { notFound } from "./http.server.ts";
import type { Role } from "./roles.ts";
import { safeRedirectPath } from "./redirect.ts";

export { safeRedirectPath };

export type SignedIn = { userId: string; studioId: string };

/** A sign-in that did not succeed; its message is safe to show. */
export class SignInError extends Error {
  constructor(
    message: string,
    readonly status: 400 | 401 | 429,
    readonly field?: "email" | "password",
  ) {
    super(message);
    this.name = "SignInError";
  }
}

export const WRONG_CREDENTIALS = "That e-mail and password do not match an account.";
export const TOO_MANY_ATTEMPTS = "Too many failed sign-ins. Wait a minute, then try again.";

/** The client's address, only when a trusted proxy tells us. */
export function clientAddress(request: Request): string | null {
  if (!env.trustProxy) return null;
  const forwarded = request.headers.get("X-Forwarded-For");
  return forwarded?.split(",")[0]?.trim() || null;
}

export const authenticator = new Authenticator<SignedIn>();

authenticator.use(
  new FormStrategy(async ({ form, request }) => {
    const parsed = signInSchema.safeParse({ email: form.get("email") ?? "", password: form.get("password") ?? "" });
    if (!parsed.success) {
      const issue = parsed.error.issues[0];
      throw new SignInError(issue.message, 400, issue.path[0] as "email" | "password");
    }
    const email = normalizeEmail(parsed.data.email);
    const address = clientAddress(request);
    if (await isSignInThrottled(email, address)) throw new SignInError(TOO_MANY_ATTEMPTS, 429);
    const user = await findUserForSignIn(email);
    // Unknown e-mail and wrong password cost the same and read the same.
    const ok = user ? await verifyPassword(parsed.data.password, user.passwordHash) : (await burnPasswordCheck(parsed.data.password), false);
    if (!ok || !user || !user.studioId) {
      await recordFailedSignIn(email, address);
      throw new SignInError(WRONG_CREDENTIALS, 401);
    }
    await clearFailedSignIns(email);
    return { userId: user.id, studioId: user.studioId };
  }),
  "password",
);

export async function createUserSession(request: Request, signedIn: SignedIn, redirectTo: string): Promise<Response> {
  return updateSessionAndRedirect(request, signedIn, redirectTo);
}

async function updateSessionAndRedirect(request: Request, values: Partial<SignedIn>, redirectTo: string): Promise<Response> {
  const session = await getSession(request);
  if (values.userId) session.set("userId", values.userId);
  if (values.studioId) session.set("studioId", values.studioId);
  return redirect(safeRedirectPath(redirectTo), { headers: { "Set-Cookie": await sessionStorage.commitSession(session) } });
}

export async function destroyUserSession(request: Request): Promise<Response> {
  const session = await getSession(request);
  return redirect("/sign-in", { headers: { "Set-Cookie": await sessionStorage.destroySession(session) } });
}

/** The signed-in user, or undefined. */
export async function getUser(request: Request): Promise<CurrentUser | undefined> {
  const session = await getSession(request);
  const userId = session.get("userId");
  const studioId = session.get("studioId");
  if (!userId || !studioId) return undefined;
  return getCurrentUser(userId, studioId);
}

/** The signed-in user; otherwise a redirect to sign-in that comes back here. */
export async function requireUser(request: Request): Promise<CurrentUser> {
  const user = await getUser(request);
  if (user) return user;
  const url = new URL(request.url);
  const back = `${url.pathname}${url.search}`;
  const search = back === "/" ? "" : `?${new URLSearchParams({ redirectTo: back })}`;
  const session = await getSession(request);
  // A cookie for a user who no longer exists is cleared on the way.
  const headers: HeadersInit = session.has("userId") ? { "Set-Cookie": await sessionStorage.destroySession(session) } : {};
  throw redirect(`/sign-in${search}`, { headers });
}

/** The signed-in user holding one of these roles; anyone else gets a 404. */
export async function requireRole(request: Request, roles: readonly Role[]): Promise<CurrentUser> {
  const user = await requireUser(request);
  if (!roles.includes(user.role)) throw notFound();
  return user;
}

/** The release, if this user may see it: staff of its studio, or a member of its client. Else 404. */
export async function requireReleaseAccess(
  request: Request,
  releaseId: string | undefined,
  roles?: readonly Role[],
): Promise<{ user: CurrentUser; release: ReleaseDetail }> {
  const user = roles ? await requireRole(request, roles) : await requireUser(request);
  const release = releaseId ? await getReleaseForUser(user, releaseId) : undefined;
  if (!release) {
    if (request.method === "GET" && releaseId) await followIntoOtherStudio(request, user, releaseId, roles);
    throw notFound();
  }
  return { user, release };
}

/**
 * A link (an e-mail, a bookmark) into a release of another studio this user
 * also belongs to: switch the session to that studio and load the same URL
 * again. Only when the membership there would grant access, so no loop.
 */
async function followIntoOtherStudio(request: Request, user: CurrentUser, releaseId: string, roles?: readonly Role[]): Promise<void> {
  if (!isUuid(releaseId)) return;
  const studioId = await membershipStudioForRelease(user.id, releaseId);
  if (!studioId || studioId === user.studioId) return;
  const there = await getCurrentUser(user.id, studioId);
  if (!there || (roles && !roles.includes(there.role)) || !(await getReleaseForUser(there, releaseId))) return;
  const url = new URL(request.url);
  throw await switchStudioRedirect(request, studioId, url.pathname + url.search);
}

/** Sets the session's studio (the caller has checked the membership) and redirects. */
export function switchStudioRedirect(request: Request, studioId: string, redirectTo: string): Promise<Response> {
  return updateSessionAndRedirect(request, { studioId }, redirectTo);
}
