import { isRouteErrorResponse } from "react-router";

// What an error page says. A thrown response carries its own message, as `{ error }` JSON (see
// `userErrorResponse`) or as text (`invariantResponse`); that message is shown as it is.
export function errorText(error: unknown): { title: string; detail: string } {
  const fallback =
    "An unexpected error stopped this page. Nothing you entered was half-saved: each action is one transaction.";
  if (!isRouteErrorResponse(error)) return { title: "Something went wrong", detail: fallback };
  const own =
    typeof error.data === "string" && error.data
      ? error.data
      : typeof error.data?.error === "string"
        ? (error.data.error as string)
        : null;
  if (error.status === 404)
    return own && own !== "Page not found"
      ? { title: "Not found", detail: own }
      : {
          title: "Page not found",
          detail: "There is no page at this address. Check the link, or go back to your home page.",
        };
  if (error.status === 403)
    return { title: "Not allowed", detail: own ?? "Your role does not give access to this page." };
  return { title: `Error ${error.status}`, detail: own ?? (error.statusText || fallback) };
}

export function ErrorPanel({ title, detail }: { title: string; detail: string }) {
  return (
    <div className="card mt-12">
      <h1 className="page-title">{title}</h1>
      <p className="mt-3 text-ink-soft">{detail}</p>
      <a className="btn-primary mt-6" href="/">
        Go to my home page
      </a>
    </div>
  );
}
