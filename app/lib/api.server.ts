// The JSON API's plumbing: who is asking (a bearer token, else the session
// cookie), JSON answers and errors, and request bodies checked with zod.
// Errors are `{ error, fieldErrors? }`; a record the caller may not see is a
// 404, exactly as on the pages.
import type { z } from "zod";
import { getCurrentUser, type CurrentUser } from "../models/user.server.ts";
import { findTokenOwner } from "../models/api-token.server.ts";
import { getUser } from "./auth.server.ts";
import type { Role } from "./roles.ts";
import { env } from "./env.server.ts";
import { RateLimiter } from "./rate-limit.ts";

/** One bucket per member, whether the call comes with a token or the session cookie. */
export const apiRateLimiter = new RateLimiter(env.apiRatePerMinute);

export type ApiFieldErrors = Record<string, string>;

export function json(data: unknown, status = 200, headers: HeadersInit = {}): Response {
  return new Response(JSON.stringify(data), { status, headers: { "Content-Type": "application/json; charset=utf-8", "Cache-Control": "no-store", ...headers } });
}

export function apiError(status: number, error: string, fieldErrors?: ApiFieldErrors): Response {
  return json(fieldErrors ? { error, fieldErrors } : { error }, status);
}

export const apiNotFound = () => apiError(404, "Not found");

/** The caller, from `Authorization: Bearer …` or the session cookie; else throws a 401. */
export async function requireApiUser(request: Request, roles?: readonly Role[]): Promise<CurrentUser> {
  const header = request.headers.get("Authorization");
  let user: CurrentUser | undefined;
  if (header) {
    const match = /^Bearer\s+(\S+)$/i.exec(header.trim());
    const owner = match ? await findTokenOwner(match[1]) : undefined;
    if (!owner) throw apiError(401, "The API token is not valid (it may have been revoked)");
    takeApiAllowance(owner.userId, owner.studioId);
    user = await getCurrentUser(owner.userId, owner.studioId);
    if (!user) throw apiError(401, "The API token's member no longer belongs to the studio");
  } else {
    user = await getUser(request);
    if (!user) throw apiError(401, "Sign in, or send an API token as Authorization: Bearer <token>");
    takeApiAllowance(user.id, user.studioId);
  }
  if (roles && !roles.includes(user.role)) throw apiNotFound();
  return user;
}

function takeApiAllowance(userId: string, studioId: string): void {
  const decision = apiRateLimiter.take(`${userId}:${studioId}`);
  if (!decision.ok) {
    throw json({ error: `Too many API requests from this member; retry in ${decision.retryAfterS} s` }, 429, { "Retry-After": String(decision.retryAfterS) });
  }
}

/** zod issues as `{ "stages[2].ratio": "must be at least 1" }` (first message per path). */
export function fieldErrorsOf(issues: readonly { path: readonly PropertyKey[]; message: string }[]): ApiFieldErrors {
  const errors: ApiFieldErrors = {};
  for (const issue of issues) {
    const key = issue.path.reduce<string>((out, part) => (typeof part === "number" ? `${out}[${part}]` : out ? `${out}.${String(part)}` : String(part)), "") || "body";
    errors[key] ??= issue.message;
  }
  return errors;
}

/** The renderer's chain errors ("stages[2] (compress).ratio") as API field errors under `params.`, first message per path. */
export function chainFieldErrors(errors: readonly { path: string; message: string }[]): ApiFieldErrors {
  const out: ApiFieldErrors = {};
  for (const e of errors) out[`params${e.path ? `.${e.path.replace(/ \([^)]*\)/g, "")}` : ""}`] ??= e.message;
  return out;
}

/** The request's JSON body checked by the schema; throws a 400 with field errors otherwise. */
export async function readJson<S extends z.ZodType>(request: Request, schema: S): Promise<z.output<S>> {
  let body: unknown;
  try {
    body = await request.json();
  } catch {
    throw apiError(400, "The body is not valid JSON", { body: "must be a JSON object" });
  }
  const parsed = schema.safeParse(body);
  if (!parsed.success) throw apiError(400, "Some fields are not valid", fieldErrorsOf(parsed.error.issues));
  return parsed.data;
}

/** 405 for a method the route does not take. */
export function methodNotAllowed(allowed: string[]): Response {
  return json({ error: `Use ${allowed.join(" or ")}` }, 405, { Allow: allowed.join(", ") });
}


/**
 * Runs a resource route's handler: a thrown Response (401, 404, 400 …) is the
 * answer; anything else is logged and answered as a JSON 500.
 */
export async function handleApi(run: () => Promise<Response>): Promise<Response> {
  try {
    return await run();
  } catch (thrown) {
    if (thrown instanceof Response) {
      if (thrown.headers.get("Content-Type")?.startsWith("application/json")) return thrown;
      // Responses from shared helpers (notFound(), redirects) said in JSON.
      if (thrown.status === 404) return apiNotFound();
      return apiError(thrown.status, thrown.statusText || "Request failed");
    }
    console.error("[tidemark] API error", thrown);
    return apiError(500, "Something went wrong on the server");
  }
}
