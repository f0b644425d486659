import { redirect } from "react-router";
import type { Route } from "./+types/sign-out";
import { destroyUserSession } from "../lib/auth.server.ts";

// Signing out is a POST (a form button), so a link or prefetch cannot sign anyone out.
export async function loader(_: Route.LoaderArgs) {
  throw redirect("/");
}

export async function action({ request }: Route.ActionArgs) {
  return destroyUserSession(request);
}
