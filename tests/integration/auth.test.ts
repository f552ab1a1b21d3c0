import { describe, expect, it } from "vitest";
import { DEMO_PERSONAS } from "../../app/auth/demo-personas";
import { Browserless, baseUrl, PERSONA, signIn, testDb } from "./helpers";

// Sign-in through the real OAuth2 authorization-code flow with PKCE against the identity-provider
// stand-in; sessions, roles, CSRF and API keys, all against the running built server.
const HOMES: Record<string, string> = {
  assessor: "/assess",
  coordinator: "/coordinate",
  trainer: "/train",
  manager: "/readiness",
  worker: "/me",
  admin: "/admin",
};

describe("sign-in", () => {
  it("each demo persona lands on their role's home via the identity provider", async () => {
    for (const p of DEMO_PERSONAS) {
      const { landedAt, hops } = await signIn(p.email);
      expect(landedAt, p.email).toBe(HOMES[p.role]);
      // The round trip really went to the provider's authorize endpoint with PKCE (S256) and came back with a code.
      const authorize = hops.find((h) => h.includes("/authorize"));
      expect(authorize).toBeDefined();
      const q = new URL(authorize!).searchParams;
      expect(q.get("code_challenge_method")).toBe("S256");
      expect(q.get("code_challenge")?.length).toBeGreaterThan(40);
      expect(hops.some((h) => h.includes("/auth/callback?code="))).toBe(true);
    }
  });

  it("an unprovisioned identity is told so and gets no session", async () => {
    const { client, landedAt } = await signIn("stranger@unknown.example");
    expect(landedAt).toBe("/auth/not-provisioned");
    expect(client.cookies.has("__limberly")).toBe(false);
    const res = await client.request("/");
    expect(res.status).toBe(302);
    expect(res.headers.get("Location")).toBe("/sign-in");
  });

  it("a deactivated user is refused at sign-in", async () => {
    const k = testDb();
    const [u] = await k("users")
      .insert({
        email: "left.company@harrowvale.example",
        display_name: "Left Company",
        active: false,
        created_at: new Date().toISOString(),
      })
      .returning("id");
    await k("role_assignments").insert({
      user_id: u.id,
      role: "coordinator",
      site_id: 1,
      created_at: new Date().toISOString(),
    });
    const { landedAt, client } = await signIn("left.company@harrowvale.example");
    expect(landedAt).toBe("/auth/not-provisioned");
    expect(client.cookies.has("__limberly")).toBe(false);
  });

  it("the session cookie is httpOnly and SameSite=Lax; a new session id at each sign-in; sign-out deletes it", async () => {
    const client = new Browserless(baseUrl());
    const start = await client.request(`/auth/start?login_hint=${encodeURIComponent(PERSONA.admin)}`);
    expect(start.status).toBe(302);
    let url = new URL(start.headers.get("Location")!).toString();
    let res = await client.request(url);
    url = new URL(res.headers.get("Location")!, url).toString();
    res = await client.request(url); // the callback
    const setCookie = res.headers.getSetCookie().find((c) => c.startsWith("__limberly="))!;
    expect(setCookie).toMatch(/HttpOnly/i);
    expect(setCookie).toMatch(/SameSite=Lax/i);
    const first = client.cookies.get("__limberly")!;
    const sessionsBefore = Number((await testDb()("sessions").count({ n: "*" }).first())!.n);

    // Signing in again replaces the session: the old id no longer works.
    await client.follow(`/auth/start?login_hint=${encodeURIComponent(PERSONA.admin)}`);
    const second = client.cookies.get("__limberly")!;
    expect(second).not.toBe(first);
    const stale = new Browserless(baseUrl());
    stale.cookies.set("__limberly", first);
    expect((await stale.request("/admin")).status).toBe(302);
    expect(Number((await testDb()("sessions").count({ n: "*" }).first())!.n)).toBe(sessionsBefore);

    expect((await client.request("/admin")).status).toBe(200);
    const out = await client.postForm("/sign-out", {});
    expect(out.status).toBe(302);
    expect(client.cookies.has("__limberly")).toBe(false);
    const replay = new Browserless(baseUrl());
    replay.cookies.set("__limberly", second);
    const after = await replay.request("/admin");
    expect(after.status).toBe(302);
    expect(after.headers.get("Location")).toMatch(/^\/sign-in/);
  });
});

describe("permissions on the server", () => {
  it("a role without the permission gets 403, and pages of other roles stay closed", async () => {
    const { client } = await signIn(PERSONA.coordinator);
    expect((await client.request("/admin/users")).status).toBe(403);
    expect((await client.request("/admin/access-log/export.xlsx")).status).toBe(403);
    expect((await client.request("/me")).status).toBe(403);
    const manager = (await signIn(PERSONA.manager)).client;
    expect((await manager.request("/assess")).status).toBe(403);
    expect((await manager.request("/coordinate")).status).toBe(403);
  });

  it("admin pages work for admin, with field-level errors on bad input and nothing written", async () => {
    const { client } = await signIn(PERSONA.admin);
    const before = Number((await testDb()("users").count({ n: "*" }).first())!.n);
    const bad = await client.postForm("/admin/users", {
      email: "not-an-email",
      displayName: "X",
      role: "assessor",
      siteId: "",
      departmentId: "",
    });
    expect(bad.status).toBe(400);
    const html = await bad.text();
    expect(html).toContain("Enter a valid e-mail address.");
    expect(html).toContain("at least 2 characters");
    expect(Number((await testDb()("users").count({ n: "*" }).first())!.n)).toBe(before);
  });

  it("refuses a cross-site POST (Origin mismatch) and one with no Origin or Referer", async () => {
    const { client } = await signIn(PERSONA.admin);
    const fields = { code: "ZZ", name: "Cross-site site", intent: "site" };
    const evil = await client.postForm("/admin/sites", fields, { Origin: "http://evil.example" });
    // React Router's own origin check (400) or ours (403) refuses it before the action runs.
    expect([400, 403]).toContain(evil.status);
    const headers = new Headers({
      "Content-Type": "application/x-www-form-urlencoded",
      Cookie: client.cookieHeader(baseUrl()),
    });
    const bare = await fetch(`${baseUrl()}/admin/sites`, {
      method: "POST",
      body: new URLSearchParams(fields),
      headers,
      redirect: "manual",
    });
    expect(bare.status).toBe(403);
    expect(await testDb()("sites").where({ code: "ZZ" }).first()).toBeUndefined();
    const ok = await client.postForm("/admin/sites", fields);
    expect(ok.status).toBe(200);
    expect(await testDb()("sites").where({ code: "ZZ" }).first()).toBeDefined();
    // Other files share this database and list the sites by name: remove the one added here.
    await testDb()("sites").where({ code: "ZZ" }).del();
  });
});

describe("API keys", () => {
  it("are shown once, stored hashed, scoped to a role and sites, and stop working when revoked", async () => {
    const { client } = await signIn(PERSONA.admin);
    const north = await testDb()("sites").where({ code: "NY" }).first();
    const res = await client.postForm("/admin/api-keys", {
      intent: "create",
      name: "Payroll bridge",
      role: "coordinator",
      siteIds: [String(north.id)],
    });
    expect(res.status).toBe(200);
    const key = /data-testid="new-api-key">([^<]+)</.exec(await res.text())![1];
    expect(key).toMatch(/^lbk_[0-9a-f]{12}_/);
    const stored = await testDb()("api_keys").where({ name: "Payroll bridge" }).first();
    // The secret is everything after the second underscore (it may itself contain "_").
    expect(JSON.stringify(stored)).not.toContain(key.split("_").slice(2).join("_"));

    const me = await fetch(`${baseUrl()}/api/v1/me`, { headers: { Authorization: `Bearer ${key}` } });
    expect(me.status).toBe(200);
    expect(await me.json()).toMatchObject({ kind: "apiKey", role: "coordinator", siteIds: [north.id] });
    const sites = await (
      await fetch(`${baseUrl()}/api/v1/sites`, { headers: { Authorization: `Bearer ${key}` } })
    ).json();
    expect(sites.sites.map((s: { code: string }) => s.code)).toEqual(["NY"]);

    const anon = await fetch(`${baseUrl()}/api/v1/me`);
    expect(anon.status).toBe(401);
    expect((await anon.json()).error).toMatch(/Authentication required/);
    const wrong = await fetch(`${baseUrl()}/api/v1/me`, { headers: { Authorization: `Bearer ${key.slice(0, -2)}xx` } });
    expect(wrong.status).toBe(401);

    await client.postForm("/admin/api-keys", { intent: "revoke", keyId: String(stored.id) });
    expect((await fetch(`${baseUrl()}/api/v1/me`, { headers: { Authorization: `Bearer ${key}` } })).status).toBe(401);
  });
});
