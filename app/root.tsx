import { Links, Meta, Outlet, Scripts, ScrollRestoration, useRouteError } from "react-router";
import { z } from "zod";
import { ErrorPanel, errorText } from "~/components/error-panel";
import { useNonce } from "~/components/nonce";
import type { Route } from "./+types/root";
import "./app.css";

// zod compiles object parsers with `new Function` unless told not to; the Content-Security-Policy allows no
// eval, so its probe would be refused (and reported) in the browser. Interpreted parsing is the same result.
z.config({ jitless: true });

import { keepRetryAfter } from "~/http/headers";

export function Layout({ children }: { children: React.ReactNode }) {
  const nonce = useNonce();
  return (
    <html lang="en-GB">
      <head>
        <meta charSet="utf-8" />
        <meta name="viewport" content="width=device-width, initial-scale=1" />
        <meta name="theme-color" content="#1f6b5c" />
        <Meta />
        <Links />
      </head>
      <body className="min-h-screen bg-paper text-ink antialiased">
        {children}
        <ScrollRestoration nonce={nonce} />
        <Scripts nonce={nonce} />
      </body>
    </html>
  );
}

export const headers = keepRetryAfter;

export const links: Route.LinksFunction = () => [
  { rel: "icon", href: "/favicon.ico", sizes: "32x32" },
  { rel: "icon", href: "/favicon.svg", type: "image/svg+xml" },
  { rel: "manifest", href: "/site.webmanifest" },
];

export const meta: Route.MetaFunction = () => [{ title: "Limberly" }];

export default function App() {
  return <Outlet />;
}

export function ErrorBoundary() {
  const { title, detail } = errorText(useRouteError());
  return (
    <main className="mx-auto max-w-xl p-6">
      <ErrorPanel title={title} detail={detail} />
    </main>
  );
}
