// Foundation e2e: sign-in through the real OAuth2/OIDC round trip for every demo persona, sign-out,
// an unprovisioned identity, the 390 px layout, accessibility (axe) and the admin users / API-key flow.
// Expected homes: ROLE_HOMES in app/auth/permissions.ts, one per role.
import AxeBuilder from "@axe-core/playwright";
import { request as playwrightRequest } from "@playwright/test";
import { DEMO_PERSONAS, type DemoPersona } from "../../app/auth/demo-personas";
import { expect, persona, SESSION_COOKIE, sessionCookie, test, watchCsp } from "./fixtures";
import { expectNoSidewaysScroll } from "./layout";

const HOME: Record<DemoPersona["role"], string> = {
  assessor: "/assess",
  coordinator: "/coordinate",
  trainer: "/train",
  manager: "/readiness",
  worker: "/me",
  admin: "/admin",
};

test.describe("sign-in and sign-out for each demo persona", () => {
  for (const p of DEMO_PERSONAS) {
    test(`${p.role} ${p.displayName} lands on ${HOME[p.role]} and signs out`, async ({
      page,
      signInAs,
      signOut,
      stack,
    }) => {
      const landed = await signInAs(page, p.email);
      expect(landed.pathname).toBe(HOME[p.role]);
      const heading = page.getByTestId("role-home");
      await expect(heading).toBeVisible();
      expect(await heading.evaluate((el) => el.tagName), "the role-home marker is the page's h1").toBe("H1");
      await expect(heading).not.toBeEmpty();
      await expect(page.getByRole("banner").getByTestId("signed-in-as")).toHaveText(p.displayName);

      // The session cookie is httpOnly, and a request carrying only that cookie is let in…
      const cookie = await sessionCookie(page.context());
      expect(cookie, "a __limberly session cookie after sign-in").toBeDefined();
      expect(cookie!.httpOnly).toBe(true);
      const replay = await playwrightRequest.newContext({ baseURL: stack.baseURL });
      const cookieHeader = { Cookie: `${SESSION_COOKIE}=${cookie!.value}` };
      const before = await replay.get(HOME[p.role], { headers: cookieHeader, maxRedirects: 0 });
      expect(before.status()).toBe(200);

      await signOut(page);
      expect(new URL(page.url()).pathname).toBe("/sign-in");
      expect(await sessionCookie(page.context())).toBeUndefined();
      await page.goto(HOME[p.role]);
      expect(new URL(page.url()).pathname).toBe("/sign-in");

      // …and after sign-out the same cookie is worthless: the session was deleted on the server.
      const after = await replay.get(HOME[p.role], { headers: cookieHeader, maxRedirects: 0 });
      expect(after.status()).toBe(302);
      expect(after.headers().location).toMatch(/^\/sign-in(\?|$)/);
      await replay.dispose();
    });
  }

  test("an unknown identity lands on 'not provisioned' and gets no session", async ({ page, signInAs }) => {
    const email = "stranger@unknown.example";
    const landed = await signInAs(page, email, { expect: "not-provisioned" });
    expect(landed.pathname).toBe("/auth/not-provisioned");
    await expect(page.getByRole("heading", { level: 1 })).toHaveText("Your account is not provisioned");
    await expect(page.getByRole("main")).toContainText(email);
    expect(await sessionCookie(page.context())).toBeUndefined();
    await page.goto("/");
    expect(new URL(page.url()).pathname).toBe("/sign-in");
    expect(await sessionCookie(page.context())).toBeUndefined();
  });
});

test.describe("at 390 px wide", () => {
  test.use({ viewport: { width: 390, height: 844 } });

  const expectNoHorizontalScroll = (page: import("@playwright/test").Page) => expectNoSidewaysScroll(page, 390);

  test("the sign-in page and the admin home do not scroll sideways", async ({ page, signInAs }, testInfo) => {
    await page.goto("/sign-in");
    await expect(page.getByRole("heading", { name: "Sign in", level: 1 })).toBeVisible();
    await expectNoHorizontalScroll(page);
    await page.screenshot({ path: testInfo.outputPath("sign-in-390.png"), fullPage: true });

    await signInAs(page, persona("admin").email);
    await expect(page.getByTestId("role-home")).toBeVisible();
    await expectNoHorizontalScroll(page);
    await page.screenshot({ path: testInfo.outputPath("admin-home-390.png"), fullPage: true });
  });
});

test.describe("accessibility (axe-core)", () => {
  async function seriousViolations(page: import("@playwright/test").Page) {
    const result = await new AxeBuilder({ page })
      .withTags(["wcag2a", "wcag2aa", "wcag21a", "wcag21aa", "best-practice"])
      .analyze();
    return result.violations
      .filter((v) => v.impact === "serious" || v.impact === "critical")
      .map((v) => `${v.impact} ${v.id}: ${v.help} — ${v.nodes.map((n) => n.target.join(" ")).join(", ")}`);
  }

  test("the sign-in page has no serious or critical violations", async ({ page }) => {
    await page.goto("/sign-in");
    await expect(page.getByRole("heading", { name: "Sign in", level: 1 })).toBeVisible();
    expect(await seriousViolations(page)).toEqual([]);
  });

  test("the assessor's home has no serious or critical violations", async ({ page, signInAs }) => {
    await signInAs(page, persona("assessor").email);
    await expect(page.getByTestId("role-home")).toBeVisible();
    expect(await seriousViolations(page)).toEqual([]);
  });

  test("the assessor's home at 390 px has no serious or critical violations", async ({ page, signInAs }) => {
    // At this width the stage table scrolls sideways; its scroll region must be reachable by keyboard.
    await page.setViewportSize({ width: 390, height: 844 });
    await signInAs(page, persona("assessor").email);
    await expect(page.getByTestId("role-home")).toBeVisible();
    expect(await seriousViolations(page)).toEqual([]);
  });
});

test.describe("Content-Security-Policy", () => {
  // Every test's context fails on a violation (fixtures.ts); this one shows the watch sees one, and that an
  // injected inline script does not run while the app's own nonced scripts do (the page hydrated).
  test("an injected inline script is refused and reported; the app's own scripts run", async ({ browser, stack }) => {
    const context = await browser.newContext({ baseURL: stack.baseURL });
    const violations = await watchCsp(context);
    const page = await context.newPage();
    await page.goto("/sign-in");
    await expect(page.getByRole("heading", { name: "Sign in", level: 1 })).toBeVisible();
    await page.waitForFunction(() => "__reactRouterRouteModules" in window);
    const ran = await page.evaluate(() => {
      const s = document.createElement("script");
      s.textContent = "window.__injected = true";
      document.body.append(s);
      return (window as unknown as { __injected?: boolean }).__injected === true;
    });
    expect(ran).toBe(false);
    await expect.poll(() => violations.length).toBeGreaterThan(0);
    expect(violations.join("\n")).toContain("script-src");
    await context.close();
  });
});

test.describe("admin: users and API keys", () => {
  test("a bad e-mail is named on its field, a valid user is added and can sign in", async ({
    page,
    signInAs,
    pageAs,
  }) => {
    await signInAs(page, persona("admin").email);
    await page.goto("/admin/users");
    const form = page.getByRole("region", { name: "Add a user" });
    const fill = async (email: string) => {
      await form.getByRole("textbox", { name: "E-mail", exact: true }).fill(email);
      await form.getByRole("textbox", { name: "Name", exact: true }).fill("Tamsin Velde");
      // A clinical role would wait for a second admin's approval (tests/integration/separation-of-duties.test.ts).
      await form.getByRole("combobox", { name: "Role", exact: true }).selectOption({ label: "Coordinator" });
      await form.getByRole("combobox", { name: "Site", exact: true }).selectOption({ label: "Riverside" });
      await form.getByRole("button", { name: "Add user" }).click();
    };

    await fill("tamsin.velde-at-harrowvale");
    const emailField = form.getByRole("textbox", { name: "E-mail", exact: true });
    await expect(emailField).toHaveAttribute("aria-invalid", "true");
    await expect(emailField).toHaveAccessibleDescription("Enter a valid e-mail address.");
    // Focus moves to the first invalid field, so keyboard and screen-reader users land on the problem.
    await expect(emailField).toBeFocused();
    await expect(form.getByRole("textbox", { name: "Name", exact: true })).not.toHaveAttribute("aria-invalid", "true");
    await expect(form.getByRole("status")).toHaveCount(0);

    const email = "tamsin.velde@harrowvale.example";
    await fill(email);
    await expect(form.getByRole("status")).toHaveText(`Added ${email}.`);
    await expect(emailField).not.toHaveAttribute("aria-invalid", "true");

    // The table lists the new user with the role…
    await page.getByLabel("Filter by name or e-mail").fill("tamsin");
    await page.getByRole("button", { name: "Filter" }).click();
    const row = page.getByRole("row").filter({ hasText: email });
    await expect(row).toHaveCount(1);
    await expect(row).toContainText("Tamsin Velde");
    await expect(row).toContainText(/coordinator/i);

    // …and she can now sign in through the real flow and lands on the coordinator's home.
    const hers = await pageAs(email);
    expect(new URL(hers.url()).pathname).toBe("/coordinate");
    await expect(hers.getByTestId("signed-in-as")).toHaveText("Tamsin Velde");
  });

  test("an API key is shown once, works, and stops working when revoked", async ({ page, signInAs, request }) => {
    await signInAs(page, persona("admin").email);
    await page.goto("/admin/api-keys");
    const name = "E2E roster bridge";
    const create = page.getByRole("region", { name: "Create a key" });
    await create.getByRole("textbox", { name: "Name (the calling system)", exact: true }).fill(name);
    await create.getByRole("combobox", { name: "Role", exact: true }).selectOption({ label: "Coordinator" });
    await create
      .getByRole("listbox", { name: "Sites", exact: true })
      .selectOption([{ label: "North Yard" }, { label: "Eastgate" }]);
    await create.getByRole("button", { name: "Create key" }).click();

    const shown = page.getByTestId("new-api-key");
    await expect(shown).toHaveText(/^lbk_[0-9a-f]{12}_[A-Za-z0-9_-]{20,}$/);
    const key = (await shown.textContent())!.trim();
    const prefix = key.split("_")[1];

    // The key works against the API with its role and exactly the two chosen sites.
    const me = await request.get("/api/v1/me", { headers: { Authorization: `Bearer ${key}` } });
    expect(me.status()).toBe(200);
    const body = await me.json();
    expect(body).toMatchObject({ kind: "apiKey", name, role: "coordinator" });
    expect(body.siteIds).toHaveLength(2);

    // Shown once: a fresh load of the page lists the key by prefix only.
    await page.goto("/admin/api-keys");
    await expect(page.getByTestId("new-api-key")).toHaveCount(0);
    const row = page.getByRole("row").filter({ hasText: name });
    await expect(row).toHaveCount(1);
    await expect(row).toContainText(prefix);
    await expect(row).toContainText("North Yard");
    await expect(row).toContainText("Eastgate");
    expect(await page.content()).not.toContain(key.split("_").slice(2).join("_"));

    await row.getByRole("button", { name: `Revoke key ${name}` }).click();
    await expect(row).toContainText(/Revoked \d{4}-\d{2}-\d{2}/);
    await expect(row.getByRole("button", { name: /Revoke/ })).toHaveCount(0);

    const refused = await request.get("/api/v1/me", { headers: { Authorization: `Bearer ${key}` } });
    expect(refused.status()).toBe(401);
  });
});
