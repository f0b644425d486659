// The cookie session: it carries only the signed-in user's id and studio;
// everything else is read from the database on each request.
import { createCookieSessionStorage } from "react-router";
import { env } from "./env.server.ts";

export type SessionData = { userId: string; studioId: string };
type FlashData = { notice: string };

export const sessionStorage = createCookieSessionStorage<SessionData, FlashData>({
  cookie: {
    name: "__tidemark",
    httpOnly: true,
    sameSite: "lax",
    secure: env.secureCookies,
    path: "/",
    secrets: [env.sessionSecret],
    maxAge: 60 * 60 * 24 * 14,
  },
});

export function getSession(request: Request) {
  return sessionStorage.getSession(request.headers.get("Cookie"));
}
