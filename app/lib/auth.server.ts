// Sign-in (remix-auth with a form strategy) and the checks every loader and
// action goes through: requireUser, requireRole, requireReleaseAccess.
import { redirect } from "react-router";
import { Authenticator } from "remix-auth";
import { FormStrategy } from "remix-auth-form";
import { signInSchema } from "../schemas/sign-in.ts";
import { getCurrentUser, findUserForSignIn, membershipStudioForRelease, normalizeEmail, type CurrentUser } from "../models/user.server.ts";
import { isUuid } from "./ids.ts";
import { admitSignInAttempt, clearSignInAttempts } from "../models/sign-in-attempt.server.ts";
import { getReleaseForUser, type ReleaseDetail } from "../models/release.server.ts";
import { burnPasswordCheck, PasswordBusyError, verifyPassword } from "./password.server.ts";
import { endSession, readSession, sessionCookie, setSessionStudio, startSession, type SessionRecord } from "./session.server.ts";
import { clientAddress } from "./client-address.server.ts";
import { RateLimiter } from "./rate-limit.ts";
import { notFound } from "./http.server.ts";
import type { Role } from "./roles.ts";
import { safeRedirectPath } from "./redirect.ts";

export { safeRedirectPath, clientAddress };

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

// In front of the database and the hashing pool: a flood from one address is
// refused in memory before it costs anything (the rows decide the rest).
const signInAddressLimiter = new RateLimiter(60, 30);

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
    if (!signInAddressLimiter.take(address ?? "unknown").ok) throw new SignInError(TOO_MANY_ATTEMPTS, 429);
    if (!(await admitSignInAttempt(email, address))) throw new SignInError(TOO_MANY_ATTEMPTS, 429);
    const user = await findUserForSignIn(email);
    let ok: boolean;
    try {
      // Unknown e-mail and wrong password cost the same and read the same.
      ok = user ? await verifyPassword(parsed.data.password, user.passwordHash) : (await burnPasswordCheck(parsed.data.password), false);
    } catch (error) {
      if (error instanceof PasswordBusyError) throw new SignInError(error.message, 429);
      throw error;
    }
    if (!ok || !user || !user.studioId) throw new SignInError(WRONG_CREDENTIALS, 401);
    await clearSignInAttempts(email, address);
    return { userId: user.id, studioId: user.studioId };
  }),
  "password",
);

/** Starts a new session (never reuses the one the request came with) and redirects. */
export async function createUserSession(request: Request, signedIn: SignedIn, redirectTo: string): Promise<Response> {
  const headers = new Headers();
  // A session cookie the browser still had is ended first: one browser, one session.
  if (request.headers.get("Cookie")) await endSession(request.headers.get("Cookie"));
  headers.append("Set-Cookie", await startSession(signedIn.userId, signedIn.studioId));
  return redirect(safeRedirectPath(redirectTo), { headers });
}

export async function destroyUserSession(request: Request): Promise<Response> {
  return redirect("/sign-in", { headers: { "Set-Cookie": await endSession(request.headers.get("Cookie")) } });
}

/** The request's session, if it is live (memoised per request: layout and page loaders both ask). */
const sessionsByRequest = new WeakMap<Request, Promise<SessionRecord | undefined>>();
export function currentSession(request: Request): Promise<SessionRecord | undefined> {
  let found = sessionsByRequest.get(request);
  if (!found) {
    found = readSession(request.headers.get("Cookie"));
    sessionsByRequest.set(request, found);
  }
  return found;
}

/** The signed-in user, or undefined. */
export async function getUser(request: Request): Promise<CurrentUser | undefined> {
  const session = await currentSession(request);
  if (!session) return undefined;
  return getCurrentUser(session.userId, session.studioId);
}

/** The signed-in user; otherwise a redirect to sign-in that comes back here. */
export async function requireUser(request: Request): Promise<CurrentUser> {
  const user = await getUser(request);
  if (user) return user;
  const url = new URL(request.url);
  const back = `${url.pathname}${url.search}`;
  const search = back === "/" ? "" : `?${new URLSearchParams({ redirectTo: back })}`;
  // A cookie of a session that has ended is cleared on the way.
  const cookie = request.headers.get("Cookie");
  const headers: HeadersInit = cookie?.includes(`${sessionCookie.name}=`) ? { "Set-Cookie": await endSession(cookie) } : {};
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
export async function switchStudioRedirect(request: Request, studioId: string, redirectTo: string): Promise<Response> {
  const session = await currentSession(request);
  if (session) await setSessionStudio(session.idHash, studioId);
  return redirect(safeRedirectPath(redirectTo));
}
