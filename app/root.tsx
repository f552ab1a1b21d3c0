import { isRouteErrorResponse, Links, Meta, Outlet, Scripts, ScrollRestoration, useRouteError } from "react-router";
import type { Route } from "./+types/root";
import "./app.css";

export function Layout({ children }: { children: React.ReactNode }) {
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
        <ScrollRestoration />
        <Scripts />
      </body>
    </html>
  );
}

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
  const error = useRouteError();
  let title = "Something went wrong";
  let detail =
    "An unexpected error stopped this page. Nothing you entered was half-saved: each action is one transaction.";
  if (isRouteErrorResponse(error)) {
    if (error.status === 404) {
      title = "Page not found";
      detail = "There is no page at this address. Check the link, or go back to your home page.";
    } else if (error.status === 403) {
      title = "Not allowed";
      detail =
        typeof error.data?.error === "string" ? error.data.error : "Your role does not give access to this page.";
    } else {
      title = `Error ${error.status}`;
      detail = typeof error.data?.error === "string" ? error.data.error : error.statusText || detail;
    }
  }
  return (
    <main className="mx-auto max-w-xl p-6">
      <div className="card mt-12">
        <h1 className="page-title">{title}</h1>
        <p className="mt-3 text-ink-soft">{detail}</p>
        <a className="btn-primary mt-6" href="/">
          Go to my home page
        </a>
      </div>
    </main>
  );
}
