import { redirect } from "react-router";
import type { Route } from "./+types/studio-switch";
import { requireUser, switchStudioRedirect } from "../lib/auth.server.ts";
import { notFound } from "../lib/http.server.ts";
import { listMemberships } from "../models/user.server.ts";
import { studioSwitchSchema } from "../schemas/studio-switch.ts";

// Switching studio is a POST from the header's chooser; a GET goes home.
export async function loader(_: Route.LoaderArgs) {
  throw redirect("/");
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request);
  const form = await request.formData();
  const parsed = studioSwitchSchema.safeParse({ studioId: form.get("studioId"), redirectTo: form.get("redirectTo") ?? undefined });
  if (!parsed.success) throw new Response(parsed.error.issues[0].message, { status: 400 });
  const memberships = await listMemberships(user.id);
  if (!memberships.some((m) => m.studioId === parsed.data.studioId)) throw notFound();
  // Pages of the old studio would 404 in the new one: land on its dashboard.
  return switchStudioRedirect(request, parsed.data.studioId, parsed.data.redirectTo ?? "/");
}
