import { isRouteErrorResponse, Links, Meta, Outlet, Scripts, ScrollRestoration } from "react-router";
import type { Route } from "./+types/root";
import "@fontsource/ibm-plex-sans/400.css";
import "@fontsource/ibm-plex-sans/500.css";
import "@fontsource/ibm-plex-sans/600.css";
import "@fontsource/ibm-plex-mono/400.css";
import "@fontsource/ibm-plex-mono/500.css";
import "./app.css";

export const links: Route.LinksFunction = () => [{ rel: "icon", href: "/favicon.svg", type: "image/svg+xml" }];

export function Layout({ children }: { children: React.ReactNode }) {
  return (
    <html lang="en">
      <head>
        <meta charSet="utf-8" />
        <meta name="viewport" content="width=device-width, initial-scale=1" />
        <Meta />
        <Links />
      </head>
      <body className="antialiased">
        {children}
        <ScrollRestoration />
        <Scripts />
      </body>
    </html>
  );
}

export default function App() {
  return <Outlet />;
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  let title = "Something went wrong";
  let detail = "Tidemark could not show this page. Try again in a moment.";
  let stack: string | undefined;
  if (isRouteErrorResponse(error)) {
    if (error.status === 404) {
      title = "Not found";
      detail = "There is nothing here, or it is not yours to see.";
    } else {
      title = `${error.status} ${error.statusText}`;
      detail = typeof error.data === "string" ? error.data : detail;
    }
  } else if (import.meta.env.DEV && error instanceof Error) {
    // Stacks only in development; production never shows internals.
    detail = error.message;
    stack = error.stack;
  }
  return (
    <main className="mx-auto max-w-2xl px-5 py-16">
      <p className="text-sm font-semibold tracking-wide text-accent uppercase">Tidemark</p>
      <h1 className="mt-2 text-3xl font-semibold">{title}</h1>
      <p className="mt-3 text-ink-soft">{detail}</p>
      <a className="btn-quiet mt-6" href="/">
        Back to the dashboard
      </a>
      {stack && <pre className="mt-8 overflow-x-auto rounded-md bg-paper-deep p-4 text-xs">{stack}</pre>}
    </main>
  );
}
