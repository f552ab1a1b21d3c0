import { describe, expect, it } from "vitest";
import routes from "../../app/routes";
import { baseUrl } from "./helpers";
import { checkAnonymous, flattenRoutes, type RouteEntry } from "./route-walk";

// Every route declared in app/routes.ts is either public on purpose (this list) or refuses anonymous
// access. A new route that forgets requireUser / requireApiAccess fails here.
const PUBLIC = new Set([
  "/", // redirects to sign-in or the role's home
  "/sign-in",
  "/auth/start", // begins the OAuth2 flow
  "/auth/callback", // ends it
  "/auth/not-provisioned",
  "/sign-out", // POST ends a session; GET redirects home
  "/api/v1/health", // liveness, no data
  "/*", // not-found page
]);

const walked = flattenRoutes(routes as unknown as RouteEntry[]);

describe("route walk over app/routes.ts", () => {
  it("finds the routes the shell and the areas declare", () => {
    const paths = walked.map((r) => r.path);
    expect(paths).toContain("/admin/users");
    expect(paths).toContain("/api/v1/me");
    expect(walked.length).toBeGreaterThan(15);
  });

  it("every non-public route refuses anonymous access (GET, POST and the .data URL)", async () => {
    const failures: string[] = [];
    let checked = 0;
    for (const r of walked.filter((w) => !PUBLIC.has(w.path))) {
      for (const v of await checkAnonymous(baseUrl(), r)) {
        checked++;
        if (!v.ok) failures.push(`${v.method} ${v.path} (${r.file}): ${v.detail}`);
      }
    }
    expect(checked).toBeGreaterThan(30);
    expect(failures).toEqual([]);
  });

  it("the public allow-list names only routes that exist", () => {
    const paths = new Set(walked.map((r) => r.path));
    for (const p of PUBLIC) expect(paths.has(p), p).toBe(true);
  });
});
