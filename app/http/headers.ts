import type { HeadersArgs } from "react-router";

// A `headers` export. React Router answers with the headers a route's `headers` export gives — without one,
// only cookies of what a loader or action returned or threw — so a 429's Retry-After would be lost. The routes
// with an error boundary (root, shell: a thrown 429 on a document) and the routes whose action may answer 429 (a
// `.data` action's answer stays on its own route) export this, which passes that one header on.
export function keepRetryAfter({ errorHeaders, actionHeaders, loaderHeaders, parentHeaders }: HeadersArgs): Headers {
  const headers = new Headers(parentHeaders);
  const retryAfter =
    errorHeaders?.get("Retry-After") ?? actionHeaders.get("Retry-After") ?? loaderHeaders.get("Retry-After");
  if (retryAfter) headers.set("Retry-After", retryAfter);
  return headers;
}
