import http from "node:http";
import type { AddressInfo } from "node:net";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { checkAnonymous, concretePath, flattenRoutes, type RouteEntry } from "./route-walk";

// The walker itself must flag an unguarded route: a fake server with one guarded page, one leaky page,
// one guarded API and one leaky API.
let server: http.Server;
let base = "";

beforeAll(async () => {
  server = http.createServer((req, res) => {
    const path = (req.url ?? "").replace(/\.data$/, "");
    if (path.startsWith("/guarded")) {
      if ((req.url ?? "").endsWith(".data")) {
        res.writeHead(202);
        res.end('[["SingleFetchRedirect",1],{"_2":3},"redirect","/sign-in"]');
        return;
      }
      res.writeHead(302, { Location: "/sign-in?returnTo=/guarded" });
      res.end();
      return;
    }
    if (path === "/api/v1/guarded") {
      res.writeHead(401, { "Content-Type": "application/json" });
      res.end('{"error":"no"}');
      return;
    }
    if (path === "/api/v1/leaky") {
      res.writeHead(200, { "Content-Type": "application/json" });
      res.end('{"workers":[1]}');
      return;
    }
    res.writeHead(200, { "Content-Type": "text/html" });
    res.end("<p>secret health data</p>");
  });
  await new Promise<void>((r) => server.listen(0, "127.0.0.1", () => r()));
  base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
});
afterAll(() => new Promise<void>((r) => server.close(() => r())));

const fake: RouteEntry[] = [
  {
    file: "shell.tsx",
    children: [
      { path: "guarded/:id", file: "guarded.tsx" },
      { path: "leaky", file: "leaky.tsx" },
    ],
  },
  { path: "api/v1/guarded", file: "api.guarded.ts" },
  { path: "api/v1/leaky", file: "api.leaky.ts" },
];

describe("route walker", () => {
  it("flattens layouts and nested paths", () => {
    expect(flattenRoutes(fake).map((r) => r.path)).toEqual([
      "/guarded/:id",
      "/leaky",
      "/api/v1/guarded",
      "/api/v1/leaky",
    ]);
    expect(concretePath("/admin/users/:userId")).toBe("/admin/users/1");
  });

  it("passes guarded routes and flags the unguarded page and API", async () => {
    const verdicts = (await Promise.all(flattenRoutes(fake).map((r) => checkAnonymous(base, r)))).flat();
    const failed = new Set(verdicts.filter((v) => !v.ok).map((v) => v.path));
    expect(failed).toEqual(new Set(["/leaky", "/api/v1/leaky"]));
    expect(verdicts.filter((v) => v.path === "/guarded/:id").every((v) => v.ok)).toBe(true);
  });
});
