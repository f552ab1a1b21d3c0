import fs from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, inject, it } from "vitest";
import routes from "../../app/routes";
import { type AppServer, startApp } from "../../scripts/stack";
import { PORTS } from "./global-setup";
import { Browserless, baseUrl, PERSONA, signIn, testDb } from "./helpers";
import { concretePath, flattenRoutes, type RouteEntry } from "./route-walk";

// The header set of every response the app answers, by route type — pages (and their `.data` URL), resource
// routes, the API — signed in and anonymous; the built assets; HSTS only in production; and the client
// address in the access log (X-Forwarded-For believed only from TRUST_PROXY).
const walked = flattenRoutes(routes as unknown as RouteEntry[]);
type Kind = "page" | "data" | "resource" | "api";
const kindOf = (r: { path: string; file: string }): Kind =>
  r.path.startsWith("/api/") ? "api" : r.file.endsWith(".tsx") ? "page" : "resource";

/** Who to sign in as to open a route (its area's role); the rest as the worker. */
function personaFor(p: string): keyof typeof PERSONA {
  if (p.startsWith("/admin")) return "admin";
  if (/^\/(assess|forecast|models|progress)/.test(p)) return "assessor";
  if (p.startsWith("/coordinate")) return "coordinator";
  if (p.startsWith("/train")) return "trainer";
  if (p.startsWith("/readiness")) return "manager";
  return "worker";
}

function headerProblems(res: Response, kind: Kind, body: string): string[] {
  const h = res.headers;
  const out: string[] = [];
  const csp = h.get("Content-Security-Policy") ?? "";
  const directives = new Map(
    csp
      .split(";")
      .map((d) => d.trim().split(/\s+/))
      .filter((d) => d[0])
      .map((d) => [d[0], d.slice(1)] as const),
  );
  if (directives.get("default-src")?.join(" ") !== "'self'") out.push(`default-src: ${csp}`);
  if (directives.get("frame-ancestors")?.join(" ") !== "'none'") out.push("frame-ancestors");
  if (directives.get("object-src")?.join(" ") !== "'none'") out.push("object-src");
  const scriptSrc = directives.get("script-src") ?? [];
  const nonce = scriptSrc.find((s) => s.startsWith("'nonce-"))?.slice(7, -1);
  if (!nonce || scriptSrc.some((s) => s === "'unsafe-inline'" || s === "'unsafe-eval'" || s === "*"))
    out.push(`script-src: ${scriptSrc.join(" ")}`);
  for (const d of ["style-src", "font-src", "img-src", "connect-src"])
    if ((directives.get(d) ?? []).some((s) => s === "*" || s.startsWith("http") || s === "data:"))
      out.push(`${d} allows another origin`);
  if (h.get("X-Frame-Options") !== "DENY") out.push(`X-Frame-Options: ${h.get("X-Frame-Options")}`);
  if (h.get("X-Content-Type-Options") !== "nosniff") out.push("X-Content-Type-Options");
  if (h.get("Referrer-Policy") !== "same-origin") out.push(`Referrer-Policy: ${h.get("Referrer-Policy")}`);
  if (h.get("Cache-Control") !== "no-store") out.push(`Cache-Control: ${h.get("Cache-Control")}`);
  if (h.has("Strict-Transport-Security")) out.push("HSTS outside production");
  if (h.has("X-Powered-By")) out.push("X-Powered-By");
  if (kind === "page" && (h.get("Content-Type") ?? "").startsWith("text/html")) {
    // Every inline script React Router wrote carries this response's nonce (else the browser refuses it).
    const scripts = [...body.matchAll(/<script\b[^>]*>/g)].map((m) => m[0]);
    if (scripts.length === 0) out.push("no scripts in the document");
    for (const s of scripts) if (!s.includes(`nonce="${nonce}"`)) out.push(`script without the nonce: ${s}`);
  }
  return out;
}

async function probe(client: Browserless | null, url: string, kind: Kind) {
  const res = client ? await client.request(url) : await fetch(url, { redirect: "manual" });
  const body = await res.text();
  return { status: res.status, problems: headerProblems(res, kind, body) };
}

describe("security headers on every route", () => {
  const clients = new Map<string, Browserless>();
  beforeAll(async () => {
    for (const who of new Set(walked.map((r) => personaFor(r.path))))
      clients.set(who, (await signIn(PERSONA[who])).client);
  });

  it("walks the routes of app/routes.ts of each type", () => {
    const kinds = new Set(walked.map(kindOf));
    expect([...kinds].sort()).toEqual(["api", "page", "resource"]);
    expect(walked.length).toBeGreaterThan(40);
  });

  for (const signedIn of [false, true]) {
    it(`${signedIn ? "signed in" : "anonymous"}: pages, their .data URLs, resource routes and the API carry the full set`, async () => {
      const failures: string[] = [];
      const statuses = new Map<Kind, number[]>();
      for (const r of walked) {
        const client = signedIn ? clients.get(personaFor(r.path))! : null;
        const p = concretePath(r.path);
        const urls: [Kind, string][] = [[kindOf(r), `${baseUrl()}${p}`]];
        if (kindOf(r) === "page") urls.push(["data", `${baseUrl()}${p === "/" ? "/_root" : p}.data`]);
        for (const [kind, url] of urls) {
          const { status, problems } = await probe(client, url, kind);
          statuses.set(kind, [...(statuses.get(kind) ?? []), status]);
          for (const x of problems) failures.push(`${kind} ${url.replace(baseUrl(), "")} (${status}): ${x}`);
        }
      }
      expect(failures).toEqual([]);
      // The walk reached real answers, not only redirects: signed in, pages render and the API answers.
      if (signedIn) {
        expect(statuses.get("page")!.filter((s) => s === 200).length).toBeGreaterThan(25);
        expect(statuses.get("data")!.filter((s) => s === 200).length).toBeGreaterThan(25);
        expect(statuses.get("api")!.filter((s) => s === 200).length).toBeGreaterThan(2);
      } else {
        expect(statuses.get("page")!.filter((s) => s === 302).length).toBeGreaterThan(25);
      }
    });
  }

  it("a POST answer (an action) carries the set too", async () => {
    const client = clients.get("admin")!;
    const res = await client.postForm("/admin/sites", { intent: "no-such-intent" });
    expect(headerProblems(res, "resource", await res.text())).toEqual([]);
  });

  it("each document gets its own nonce", async () => {
    const a = await fetch(`${baseUrl()}/sign-in`);
    const b = await fetch(`${baseUrl()}/sign-in`);
    const nonceOf = (r: Response) => /'nonce-([^']+)'/.exec(r.headers.get("Content-Security-Policy") ?? "")?.[1];
    expect(nonceOf(a)).toMatch(/^[A-Za-z0-9+/=]{20,}$/);
    expect(nonceOf(a)).not.toBe(nonceOf(b));
  });

  it("built assets are cached for good, still nosniff, and carry no no-store", async () => {
    const assets = fs.readdirSync(path.resolve(__dirname, "../../build/client/assets"));
    for (const file of [assets.find((f) => f.endsWith(".js"))!, assets.find((f) => f.endsWith(".css"))!]) {
      const res = await fetch(`${baseUrl()}/assets/${file}`);
      expect(res.status, file).toBe(200);
      expect(res.headers.get("Cache-Control")).toBe("public, max-age=31536000, immutable");
      expect(res.headers.get("X-Content-Type-Options")).toBe("nosniff");
    }
  });
});

describe("client address and production-only headers (an app instance of their own)", () => {
  let prod: AppServer;
  const port = PORTS.app + 11;
  beforeAll(async () => {
    prod = await startApp(
      {
        appPort: port,
        idpPort: PORTS.idp,
        smtpPort: PORTS.smtp,
        databaseUrl: inject("databaseUrl"),
        outboxDir: fs.mkdtempSync(path.join(process.env.TMPDIR ?? "/tmp", "limberly-prod-")),
        mode: "test",
        quiet: true,
      },
      // The test stack's session secret, so that its sessions are valid here too.
      {
        LIMBERLY_MODE: "production",
        SESSION_SECRET: "limberly-development-secret-not-for-production",
        TRUST_PROXY: "loopback",
      },
    );
  });
  afterAll(async () => {
    await prod?.stop();
  });

  it("production sends HSTS and upgrades insecure requests; the rest of the set is unchanged", async () => {
    const res = await fetch(`http://localhost:${port}/sign-in`);
    expect(res.headers.get("Strict-Transport-Security")).toBe("max-age=31536000; includeSubDomains");
    expect(res.headers.get("Content-Security-Policy")).toContain("upgrade-insecure-requests");
    expect(res.headers.get("X-Frame-Options")).toBe("DENY");
    expect(res.headers.get("Cache-Control")).toBe("no-store");
  });

  /** One worker's forecast page: a read of an individual's health data, so the access log records it. */
  async function forecastPath(): Promise<string> {
    const w = await testDb()("workers").whereNot("stage", "withdrawn").orderBy("id").first("id");
    return `/forecast/${w.id}`;
  }

  /** The IP the access log recorded for one read of a worker's forecast by this client. */
  async function loggedIp(client: Browserless, forwardedFor: string): Promise<string | null> {
    const before = Number((await testDb()("access_log").max({ id: "id" }).first())?.id ?? 0);
    const path = await forecastPath();
    const res = await client.request(path, { headers: { "X-Forwarded-For": forwardedFor } });
    expect(res.status).toBe(200);
    const rows = await testDb()("access_log").where("id", ">", before).where({ route: path }).select("ip");
    expect(rows.length).toBeGreaterThan(0);
    expect(new Set(rows.map((r) => r.ip)).size).toBe(1);
    return rows[0].ip;
  }

  it("without TRUST_PROXY the access log records the socket's address, not X-Forwarded-For", async () => {
    const { client } = await signIn(PERSONA.assessor);
    expect(["127.0.0.1", "::1"]).toContain(await loggedIp(client, "6.6.6.6"));
    // A header with the server's own name for the address is overwritten too.
    const res = await client.request(await forecastPath(), { headers: { "X-Limberly-Client-Address": "6.6.6.6" } });
    expect(res.status).toBe(200);
    const last = await testDb()("access_log").orderBy("id", "desc").first();
    expect(["127.0.0.1", "::1"]).toContain(last.ip);
  });

  it("with TRUST_PROXY=loopback the address the proxy saw is recorded, and a client's own entries are not", async () => {
    const { client: main } = await signIn(PERSONA.assessor);
    const client = new Browserless(`http://localhost:${port}`);
    client.cookies = main.cookies;
    expect(await loggedIp(client, "198.51.100.23")).toBe("198.51.100.23");
    // The client wrote the first entry itself; the proxy appended the address it saw.
    expect(await loggedIp(client, "6.6.6.6, 198.51.100.24")).toBe("198.51.100.24");
  });
});
