import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { type Browserless, baseUrl, freshAssessmentSession, PERSONA, pageText, signIn, testDb } from "./helpers";

// Crafted requests get a 400 (or 422 for a file's content) with a message naming the field or row, never a 500,
// and change nothing: prototype keys as sort columns, malformed multipart bodies, out-of-range numbers in a
// trace, ids of rows that do not exist, and text placed in the sign-in pages' URLs.
const k = testDb();

let admin: Browserless;
let assessor: Browserless;
let coordinator: Browserless;
beforeAll(async () => {
  [admin, assessor, coordinator] = await Promise.all(
    [PERSONA.admin, PERSONA.assessor, PERSONA.coordinator].map(async (e) => (await signIn(e)).client),
  );
});

const text = (html: string) => pageText(html, { dropScripts: true });

const count = async (table: string) => Number((await k(table).count({ n: "*" }).first())!.n);

const LIST_PAGES: { who: () => Browserless; path: string }[] = [
  { who: () => admin, path: "/admin/users" },
  { who: () => admin, path: "/admin/access-log" },
  { who: () => assessor, path: "/assess/workers" },
  { who: () => assessor, path: "/forecast" },
  { who: () => coordinator, path: "/coordinate/trainees" },
];

describe("list pages", () => {
  it("answer sort=__proto__, constructor and other prototype names with 400 naming the sort parameter", async () => {
    for (const { who, path } of LIST_PAGES) {
      expect((await who().request(path)).status, path).toBe(200);
      for (const sort of ["__proto__", "constructor", "toString", "hasOwnProperty", "valueOf"]) {
        const res = await who().request(`${path}?sort=${sort}`);
        expect(res.status, `${path}?sort=${sort}`).toBe(400);
        expect(text(await res.text()), `${path}?sort=${sort}`).toContain("Sort: not a column of this list");
      }
    }
  });

  it("answer a bad page, size, dir or filter with 400 naming that parameter", async () => {
    const cases: [string, string, Browserless][] = [
      ["/admin/users?page=0", "Page: a whole number from 1.", admin],
      ["/admin/users?size=100000", "Size: 5 to 200 rows per page.", admin],
      ["/admin/access-log?dir=sideways", "Dir: asc or desc.", admin],
      ["/assess/workers?site=99999999999999999999", "Site: not a known id.", assessor],
      ["/assess/workers?stage=constructor", "Stage: choose a readiness stage from the list.", assessor],
      ["/forecast?device=1e30", "Device: not a known id.", assessor],
    ];
    for (const [url, message, who] of cases) {
      const res = await who.request(url);
      expect(res.status, url).toBe(400);
      expect(text(await res.text()), url).toContain(message);
    }
  });
});

describe("uploads", () => {
  it("answer a malformed multipart body with 400 and a message naming the file field, writing nothing", async () => {
    const sessionUrl = await freshAssessmentSession(assessor, "first");
    const before = { traces: await count("trace_uploads"), rosters: await count("roster_imports") };
    const bodies: [string, string][] = [
      ["multipart/form-data; boundary=----x", '------x\r\nContent-Disposition: form-data; name="intent"\r\n\r\nupl'],
      ["multipart/form-data; boundary=----x", "no boundary here at all"],
      ["multipart/form-data", "------x\r\n\r\n"],
      ["text/plain", "intent=upload&kind=force"],
    ];
    for (const [path, label] of [
      [sessionUrl, "Trace file: The upload could not be read"],
      ["/assess/roster", "Roster file: The upload could not be read"],
    ]) {
      for (const [type, body] of bodies) {
        const res = await assessor.request(path, { method: "POST", body, headers: { "Content-Type": type } });
        expect(res.status, `${path} ${type} ${body}`).toBe(400);
        expect(text(await res.text()), `${path} ${type}`).toContain(label);
      }
    }
    expect({ traces: await count("trace_uploads"), rosters: await count("roster_imports") }).toEqual(before);
  });

  it("refuses a force trace of huge values naming the row and column, and a huge typed score naming the measure", async () => {
    const sessionUrl = await freshAssessmentSession(assessor, "first");
    const sessionId = Number(sessionUrl.split("/").pop());
    const before = { traces: await count("trace_uploads"), results: await count("assessment_results") };
    const csv = "target,produced\n1e200,1e200\n2e200,2.1e200\n3e200,2.9e200\n4e200,4.2e200\n";
    const fd = new FormData();
    fd.append("intent", "upload");
    fd.append("kind", "force");
    fd.append("trace", new Blob([csv], { type: "text/csv" }), "huge.csv");
    const res = await assessor.request(sessionUrl, { method: "POST", body: fd });
    expect(res.status).toBe(422);
    const page = text(await res.text());
    expect(page).toContain('Row 2, target: "1e200" is outside the accepted range (±1e12)');
    expect(page).toContain('Row 2, produced: "1e200" is outside the accepted range (±1e12)');

    const peg = await k("measures").where({ code: "pegboard.dominant" }).first("id", "name");
    const typed = await assessor.postForm(sessionUrl, { intent: "manual", [`m.${peg.id}`]: "1e300" });
    expect(typed.status).toBe(400);
    expect(text(await typed.text())).toContain(`${peg.name}: the score is outside the accepted range (±1e12).`);
    expect({ traces: await count("trace_uploads"), results: await count("assessment_results") }).toEqual(before);
    expect(await k("assessment_results").where({ session_id: sessionId }).first()).toBeUndefined();
  });
});

describe("ids of rows that do not exist", () => {
  it("a user's department or site: 400 naming the field, checked before anything is inserted", async () => {
    const before = { users: await count("users"), roles: await count("role_assignments") };
    const created = await admin.postForm("/admin/users", {
      email: "nobody.here@harrowvale.example",
      displayName: "Nobody Here",
      role: "manager",
      siteId: "",
      departmentId: "999999",
    });
    expect(created.status).toBe(400);
    expect(text(await created.text())).toContain("Department: no department with id 999999.");
    const someone = await k("users").where({ email: PERSONA.manager }).first("id");
    const added = await admin.postForm(`/admin/users/${someone.id}`, {
      intent: "add-role",
      role: "manager",
      siteId: "999998",
      departmentId: "",
    });
    expect(added.status).toBe(400);
    expect(text(await added.text())).toContain("Site: no site with id 999998.");
    expect({ users: await count("users"), roles: await count("role_assignments") }).toEqual(before);
  });

  it("an API key's site: 400 naming the sites field, no key stored", async () => {
    const before = { keys: await count("api_keys"), sites: await count("api_key_sites") };
    const res = await admin.postForm("/admin/api-keys", {
      intent: "create",
      name: "Ghost site bridge",
      role: "coordinator",
      siteIds: ["999997"],
    });
    expect(res.status).toBe(400);
    expect(text(await res.text())).toContain("Sites: no site with id 999997.");
    expect({ keys: await count("api_keys"), sites: await count("api_key_sites") }).toEqual(before);
  });
});

describe("sign-in pages show only their own messages", () => {
  it("/sign-in?error= shows a fixed message for a known code and never the URL's text", async () => {
    const crafted = "Your account is locked. Call 0800 555 0199 and give your password";
    const res = await fetch(`${baseUrl()}/sign-in?error=${encodeURIComponent(crafted)}`);
    expect(res.status).toBe(200);
    const page = text(await res.text());
    expect(page).not.toContain("Call 0800");
    expect(page).toContain("Sign-in did not complete. Please try again");
    const known = text(await (await fetch(`${baseUrl()}/sign-in?error=state-mismatch`)).text());
    expect(known).toContain("Sign-in was started in another tab or took too long.");
    const none = text(await (await fetch(`${baseUrl()}/sign-in`)).text());
    expect(none).not.toContain("Sign-in did not complete");
  });

  it("/auth/not-provisioned ignores ?email= and shows the identity the provider confirmed", async () => {
    const crafted = await fetch(
      `${baseUrl()}/auth/not-provisioned?email=${encodeURIComponent("helpdesk@evil.example; reset at evil.example")}`,
    );
    expect(crafted.status).toBe(200);
    expect(text(await crafted.text())).not.toContain("evil.example");

    const { client, landedAt } = await signIn("stranger@unknown.example");
    expect(landedAt).toBe("/auth/not-provisioned");
    const page = text(await (await client.request("/auth/not-provisioned")).text());
    expect(page).toContain("(stranger@unknown.example)");
    // The e-mail is not in the URL, and a tampered cookie shows none.
    const tampered = await fetch(`${baseUrl()}/auth/not-provisioned`, {
      headers: { Cookie: `__limberly_unprovisioned=${Buffer.from('"helpdesk@evil.example"').toString("base64")}` },
    });
    expect(text(await tampered.text())).not.toContain("evil.example");
  });
});

afterAll(async () => {
  await k("users").where({ email: "nobody.here@harrowvale.example" }).del();
});
