// Walks a React Router route config and checks that each route either is on the public allow-list or
// refuses anonymous access: pages redirect to /sign-in, API routes answer 401 JSON. Used on the real
// app/routes.ts (route-guard.test.ts) and on a deliberately leaky fake (route-walk.test.ts).
export interface RouteEntry {
  path?: string;
  index?: boolean;
  file: string;
  children?: RouteEntry[];
}
export interface WalkedRoute {
  path: string;
  file: string;
  api: boolean;
}

export function flattenRoutes(entries: RouteEntry[], prefix = ""): WalkedRoute[] {
  const out: WalkedRoute[] = [];
  for (const e of entries) {
    const here = e.path ? `${prefix.replace(/\/$/, "")}/${e.path}` : prefix || "/";
    if (e.index || e.path !== undefined) {
      const path = here.replace(/\/+/g, "/");
      out.push({ path, file: e.file, api: path.startsWith("/api/") });
    }
    if (e.children) out.push(...flattenRoutes(e.children, e.path ? here : prefix));
  }
  return out;
}

/** A concrete URL for a route pattern: params become 1, a splat becomes a nonsense segment. */
export function concretePath(pattern: string): string {
  return pattern.replace(/:[A-Za-z0-9_]+\??/g, "1").replace(/\*$/, "no-such-page-xyz");
}

export interface Verdict {
  path: string;
  method: string;
  ok: boolean;
  detail: string;
}

export async function checkAnonymous(base: string, route: WalkedRoute): Promise<Verdict[]> {
  const url = `${base}${concretePath(route.path)}`;
  const verdicts: Verdict[] = [];
  const origin = new URL(base).origin;
  for (const method of ["GET", "POST"] as const) {
    const res = await fetch(url, {
      method,
      redirect: "manual",
      headers: method === "POST" ? { Origin: origin, "Content-Type": "application/x-www-form-urlencoded" } : {},
      body: method === "POST" ? "intent=probe" : undefined,
    });
    const location = res.headers.get("Location") ?? "";
    const body = await res.text();
    let ok: boolean;
    let detail: string;
    if (route.api) {
      let json: unknown = null;
      try {
        json = JSON.parse(body);
      } catch {
        /* not JSON */
      }
      ok = (res.status === 401 && json !== null) || (method === "POST" && res.status === 405);
      detail = `${res.status} ${res.headers.get("Content-Type") ?? ""}`;
    } else {
      const toSignIn = res.status >= 300 && res.status < 400 && new URL(location, url).pathname === "/sign-in";
      ok = toSignIn || (method === "POST" && res.status === 405);
      detail = `${res.status}${location ? ` → ${location}` : ""}`;
    }
    verdicts.push({ path: route.path, method, ok, detail });
  }
  // The single-fetch data URL of a page must not answer with data either.
  if (!route.api) {
    const dataUrl = `${base}${concretePath(route.path) === "/" ? "/_root" : concretePath(route.path)}.data`;
    const res = await fetch(dataUrl, { redirect: "manual" });
    const body = await res.text();
    // Single fetch encodes a loader's redirect in the turbo-stream body: ["SingleFetchRedirect",…,"redirect","/sign-in…"].
    const redirected = res.status === 202 && body.includes("SingleFetchRedirect") && /"redirect","\/sign-in/.test(body);
    const ok =
      redirected ||
      (res.status >= 300 && res.status < 400 && (res.headers.get("Location") ?? "").startsWith("/sign-in")) ||
      res.status === 404;
    verdicts.push({ path: route.path, method: "GET .data", ok, detail: `${res.status} ${body.slice(0, 120)}` });
  }
  return verdicts;
}
