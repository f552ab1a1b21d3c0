/**
 * Fixtures and helpers for Limberly's e2e specs. Import `test` and `expect` from here instead of
 * "@playwright/test":   import { test, expect, persona } from "./fixtures";
 *
 * The stack (tests/e2e/global-setup.ts): a fresh SQLite database, migrated and seeded with the invented
 * demo scenario (seeds/), the built app in "test" mode at `baseURL` (http://localhost:3400), the
 * identity-provider stand-in and the SMTP catcher. One stack serves the whole run and specs run in
 * parallel (2 workers), so a test that writes data must not assume it is alone: create what you need
 * with names of your own, and match e-mails by recipient and subject.
 *
 * Fixtures (per test):
 *   signInAs(page, email, { expect? })  Goes to /sign-in in `page` and clicks the persona with that e-mail, or
 *                             types the e-mail into "Another identity", then follows the REAL OAuth2/OIDC round
 *                             trip (/auth/start → identity provider → /auth/callback) and waits until the page
 *                             lands. Resolves with the landing URL; throws if sign-in failed, or if it ended on
 *                             /auth/not-provisioned unless called with { expect: "not-provisioned" }.
 *                             Use a page without a session (each test's `page` starts without one).
 *   signOut(page)             Presses "Sign out" in the header and waits for /sign-in.
 *   pageAs(email)             A new page in its own browser context, already signed in as `email` (same real
 *                             flow). For flows with two people at once; closed after the test.
 *   outbox                    Mail caught by the SMTP catcher (JSON files in OUTBOX_DIR):
 *                             outbox.all(), outbox.to(address), outbox.waitFor(predicate, { timeoutMs }).
 *   stack                     Where the stack is: { baseURL, issuer, smtpPort, outboxDir, databaseUrl, tempDir }.
 *
 * Every test's browser context (and each pageAs context) fails the test if the browser reported a
 * Content-Security-Policy violation (a `securitypolicyviolation` event or the console's report of one).
 *
 * Helpers: persona(role) / personaByEmail(email) from app/auth/demo-personas.ts (invented people);
 *   SESSION_COOKIE ("__limberly") and sessionCookie(context) to check whether a browser holds a session;
 *   signInAs / signOut / readOutbox / waitForMail are also exported as plain functions.
 *
 * Run: npx react-router build && npx playwright test --config tests/e2e/playwright.config.ts
 * Screenshots you take with testInfo.outputPath("name.png") land in test-results/e2e/ (git-ignored).
 */
import { type BrowserContext, test as base, type Cookie, expect, type Page } from "@playwright/test";
import { DEMO_PERSONAS, type DemoPersona } from "../../app/auth/demo-personas";
import { type CaughtMessage, readOutbox as readOutboxDir } from "../../scripts/smtp-catcher";
import { type E2eState, e2eState } from "./state";

export type { CaughtMessage, DemoPersona, E2eState };
export { expect };

export const SESSION_COOKIE = "__limberly";

/** The first demo persona with this role (app/auth/demo-personas.ts). */
export function persona(role: DemoPersona["role"]): DemoPersona {
  const p = DEMO_PERSONAS.find((x) => x.role === role);
  if (!p) throw new Error(`No demo persona has the role "${role}".`);
  return p;
}

export function personaByEmail(email: string): DemoPersona {
  const p = DEMO_PERSONAS.find((x) => x.email === email.toLowerCase());
  if (!p) throw new Error(`No demo persona has the e-mail ${email}.`);
  return p;
}

export async function sessionCookie(context: BrowserContext): Promise<Cookie | undefined> {
  return (await context.cookies()).find((c) => c.name === SESSION_COOKIE);
}

const FLOW_PATHS = new Set(["/sign-in", "/auth/start", "/auth/callback"]);

export interface SignInOptions {
  /** "signed-in" (default): must end on a signed-in page. "not-provisioned": must end on /auth/not-provisioned. */
  expect?: "signed-in" | "not-provisioned";
}

/** Signs in through the sign-in page and the real OAuth2/OIDC round trip. Resolves with the landing URL. */
export async function signInAs(page: Page, email: string, options: SignInOptions = {}): Promise<URL> {
  const want = options.expect ?? "signed-in";
  await page.goto("/sign-in");
  const start = new URL(page.url());
  if (start.pathname !== "/sign-in") {
    throw new Error(
      `signInAs(${email}): /sign-in sent this page on to ${start.pathname}, so someone is already signed in here. Use a fresh page or signOut first.`,
    );
  }
  const origin = start.origin;
  const personaForm = page
    .locator("form")
    .filter({ has: page.locator(`input[type="hidden"][name="login_hint"][value=${JSON.stringify(email)}]`) });
  if ((await personaForm.count()) === 1) {
    await personaForm.getByRole("button").click();
  } else {
    await page.getByLabel("Another identity (e-mail)").fill(email);
    await page.getByRole("button", { name: "Sign in as this identity" }).click();
  }
  await page.waitForURL(
    (u) =>
      u.origin === origin &&
      (!FLOW_PATHS.has(u.pathname) || (u.pathname === "/sign-in" && u.searchParams.has("error"))),
  );
  const landed = new URL(page.url());
  if (landed.pathname === "/sign-in") {
    throw new Error(`signInAs(${email}): sign-in failed: ${landed.searchParams.get("error")}`);
  }
  const notProvisioned = landed.pathname === "/auth/not-provisioned";
  if (want === "signed-in" && notProvisioned)
    throw new Error(`signInAs(${email}): this identity is not provisioned in Limberly.`);
  if (want === "not-provisioned" && !notProvisioned)
    throw new Error(`signInAs(${email}): expected /auth/not-provisioned, landed on ${landed.pathname}.`);
  return landed;
}

/** Signs out with the header's "Sign out" button and waits for the sign-in page. */
export async function signOut(page: Page): Promise<void> {
  await page.getByRole("banner").getByRole("button", { name: "Sign out" }).click();
  await page.waitForURL((u) => u.pathname === "/sign-in");
}

/** Every message the SMTP catcher has written so far, oldest first. */
export function readOutbox(): CaughtMessage[] {
  return readOutboxDir(e2eState().outboxDir);
}

/** Waits until a caught message matches (mail is sent asynchronously); throws naming what did arrive. */
export async function waitForMail(
  predicate: (m: CaughtMessage) => boolean,
  options: { timeoutMs?: number } = {},
): Promise<CaughtMessage> {
  const deadline = Date.now() + (options.timeoutMs ?? 10_000);
  for (;;) {
    const all = readOutbox();
    const hit = all.find(predicate);
    if (hit) return hit;
    if (Date.now() > deadline) {
      const seen = all.map((m) => `"${m.subject}" to ${m.to.join(", ")}`).join("; ") || "none";
      throw new Error(`No caught e-mail matched within ${options.timeoutMs ?? 10_000} ms. Caught so far: ${seen}`);
    }
    await new Promise((r) => setTimeout(r, 100));
  }
}

export interface Outbox {
  all(): CaughtMessage[];
  to(address: string): CaughtMessage[];
  waitFor(predicate: (m: CaughtMessage) => boolean, options?: { timeoutMs?: number }): Promise<CaughtMessage>;
}

/** Collects the Content-Security-Policy violations of a context's pages: the DOM event and the console report. */
export async function watchCsp(context: BrowserContext): Promise<string[]> {
  const found: string[] = [];
  await context.addInitScript(() => {
    document.addEventListener("securitypolicyviolation", (e) => {
      console.error(
        `[csp-violation] ${e.effectiveDirective} refused ${e.blockedURI || "an inline script or style"} (${e.sourceFile}:${e.lineNumber})`,
      );
    });
  });
  context.on("console", (m) => {
    if (m.text().startsWith("[csp-violation]") || m.text().includes("Content Security Policy"))
      found.push(`${m.page()?.url() ?? "?"}: ${m.text()}`);
  });
  return found;
}

interface Fixtures {
  stack: E2eState;
  signInAs: (page: Page, email: string, options?: SignInOptions) => Promise<URL>;
  signOut: (page: Page) => Promise<void>;
  pageAs: (email: string) => Promise<Page>;
  outbox: Outbox;
}

export const test = base.extend<Fixtures>({
  context: async ({ context }, use) => {
    const violations = await watchCsp(context);
    await use(context);
    expect(violations, "Content-Security-Policy violations in the browser").toEqual([]);
  },
  // eslint-disable-next-line no-empty-pattern
  stack: async ({}, use) => {
    await use(e2eState());
  },
  // eslint-disable-next-line no-empty-pattern
  signInAs: async ({}, use) => {
    await use(signInAs);
  },
  // eslint-disable-next-line no-empty-pattern
  signOut: async ({}, use) => {
    await use(signOut);
  },
  pageAs: async ({ browser, stack }, use) => {
    const contexts: BrowserContext[] = [];
    const violations: string[] = [];
    await use(async (email) => {
      const context = await browser.newContext({ baseURL: stack.baseURL });
      contexts.push(context);
      const found = await watchCsp(context);
      context.on("close", () => violations.push(...found));
      const page = await context.newPage();
      await signInAs(page, email);
      return page;
    });
    for (const c of contexts) await c.close();
    expect(violations, "Content-Security-Policy violations in the browser").toEqual([]);
  },
  // eslint-disable-next-line no-empty-pattern
  outbox: async ({}, use) => {
    await use({
      all: readOutbox,
      to: (address) => readOutbox().filter((m) => m.to.some((t) => t.toLowerCase() === address.toLowerCase())),
      waitFor: waitForMail,
    });
  },
});
