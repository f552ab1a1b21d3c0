import type { HeadersArgs } from "react-router";

// A `headers` export. React Router answers with the headers of the route whose boundary took the error — not
// those of the response a loader or action threw — so a thrown 429 would lose its Retry-After. The routes with
// an error boundary (root, shell: documents) and the routes whose action may answer 429 (a `.data` action's
// error stays on its own route) export this, which passes that one header on.
export function keepRetryAfter({ errorHeaders, parentHeaders }: HeadersArgs): Headers {
  const headers = new Headers(parentHeaders);
  const retryAfter = errorHeaders?.get("Retry-After");
  if (retryAfter) headers.set("Retry-After", retryAfter);
  return headers;
}
