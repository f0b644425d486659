import { Form, NavLink, Outlet } from "react-router";
import type { Route } from "./+types/workspace";
import { requireUser } from "../lib/auth.server.ts";
import { isStaff } from "../lib/roles.ts";
import { fakeSmtpInUse } from "../models/outbox.server.ts";
import { listMemberships } from "../models/user.server.ts";
import { StudioChooser } from "../components/studio-chooser.tsx";

const ROLE_LABELS = { owner: "Owner", engineer: "Engineer", client: "Client" } as const;

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const memberships = await listMemberships(user.id);
  const studios =
    memberships.length > 1
      ? memberships.map((m) => ({ studioId: m.studioId, label: `${m.studioName} · ${m.clientName ?? ROLE_LABELS[m.role]}` }))
      : [];
  return {
    user: { name: user.name, role: user.role, studioId: user.studioId, studioName: user.studioName, clientName: user.clientName },
    studios,
    // The outbox is in the navigation where the fake SMTP server catches the mail (development, tests); elsewhere Team links it.
    showOutbox: user.role === "owner" && fakeSmtpInUse(),
  };
}

export default function Workspace({ loaderData }: Route.ComponentProps) {
  const { user, studios, showOutbox } = loaderData;
  const nav = [
    { to: "/", label: "Dashboard", end: true, show: true },
    { to: "/releases", label: "Releases", end: false, show: isStaff(user.role) },
    { to: "/templates", label: "Templates", end: false, show: isStaff(user.role) },
    { to: "/team", label: "Team", end: false, show: user.role === "owner" },
    { to: "/outbox", label: "Outbox", end: false, show: showOutbox },
    { to: "/settings", label: "Settings", end: false, show: true },
  ].filter((item) => item.show);
  return (
    <div className="min-h-screen">
      <header className="border-b border-rule bg-card/70">
        <div className="mx-auto flex max-w-6xl flex-wrap items-center gap-x-6 gap-y-2 px-4 py-3 sm:px-6">
          <NavLink to="/" className="flex items-center gap-2 font-semibold tracking-tight">
            <img src="/favicon.svg" alt="" className="h-7 w-7" />
            <span>Tidemark</span>
          </NavLink>
          <nav aria-label="Main" className="order-3 -mx-1 flex w-full gap-1 overflow-x-auto sm:order-none sm:w-auto">
            {nav.map((item) => (
              <NavLink
                key={item.to}
                to={item.to}
                end={item.end}
                className={({ isActive }) =>
                  `rounded-md px-3 py-2 text-sm whitespace-nowrap ${isActive ? "bg-accent-wash font-medium text-accent-deep" : "text-ink-soft hover:bg-paper-deep"}`
                }
              >
                {item.label}
              </NavLink>
            ))}
          </nav>
          <div className="ml-auto flex items-center gap-3">
            {studios.length > 1 ? <StudioChooser choices={studios} currentStudioId={user.studioId} /> : null}
            <div className="text-right text-sm leading-tight">
              <p className="font-medium">{user.name}</p>
              <p className="text-ink-faint">
                {ROLE_LABELS[user.role]} · {user.clientName ?? user.studioName}
              </p>
            </div>
            <Form method="post" action="/sign-out">
              <button type="submit" className="btn-quiet px-3">
                Sign out
              </button>
            </Form>
          </div>
        </div>
      </header>
      <main className="mx-auto max-w-6xl px-4 py-6 sm:px-6 sm:py-8">
        <Outlet />
      </main>
    </div>
  );
}
