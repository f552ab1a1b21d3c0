import { afterAll, beforeAll, describe, expect, inject, it } from "vitest";
import { readOutbox } from "../../scripts/smtp-catcher";
import { type Browserless, baseUrl, PERSONA, pageText, signIn, testDb } from "./helpers";

// Separation of duties: nobody changes their own roles; a clinical role (assessor, trainer) or an API key with
// one takes a second admin's approval; every request, decision and grant is in the role and key audit log
// and mailed (real SMTP, the local catcher) to the organisation's other admins. Checked through the form
// actions (document and single-fetch .data URLs) and through the API the keys are used on.
const k = testDb();
const outbox = () => readOutbox(inject("outboxDir"));
const SECOND_ADMIN = "priya.marsh@harrowvale.example";
const NEW_STAFF = "tamsin.velde@harrowvale.example";

const text = (html: string) => pageText(html, { dropScripts: true });

const count = async (table: string) => Number((await k(table).count({ n: "*" }).first())!.n);
const rolesOf = async (userId: number) => (await k("role_assignments").where({ user_id: userId }).pluck("role")).sort();
const bearer = (key: string) => ({ headers: { Authorization: `Bearer ${key}` } });

let admin: Browserless;
let adminId: number;
let northId: number;
beforeAll(async () => {
  admin = (await signIn(PERSONA.admin)).client;
  adminId = (await k("users").where({ email: PERSONA.admin }).first("id")).id;
  northId = (await k("sites").where({ code: "NY" }).first("id")).id;
});

describe("nobody changes their own roles", () => {
  it("an admin granting themselves assessor is refused (form and .data URL), nothing changes, no health data", async () => {
    const before = { roles: await rolesOf(adminId), all: await count("role_assignments") };
    const fields = { intent: "add-role", role: "assessor", siteId: String(northId), departmentId: "" };
    const form = await admin.postForm(`/admin/users/${adminId}`, fields);
    expect(form.status).toBe(403);
    expect(text(await form.text())).toContain("Role: you cannot change your own roles; ask another admin to do it.");
    const single = await admin.postForm(`/admin/users/${adminId}.data`, fields);
    expect(single.status).toBe(403);
    expect(await single.text()).toContain("you cannot change your own roles");
    // Removing one's own role is refused the same way.
    const own = await k("role_assignments").where({ user_id: adminId }).first("id");
    const removal = await admin.postForm(`/admin/users/${adminId}`, {
      intent: "remove-role",
      assignmentId: String(own.id),
    });
    expect(removal.status).toBe(403);
    expect({ roles: await rolesOf(adminId), all: await count("role_assignments") }).toEqual(before);
    expect((await admin.request("/assess/workers")).status).toBe(403);
  });
});

describe("clinical roles and keys take a second admin", () => {
  it("request → the requester cannot approve → a second admin approves; audited and mailed to the other admins", async () => {
    const mailBefore = outbox().length;
    // A second admin (admin is not a clinical role, so it is granted at once, audited and mailed).
    const added = await admin.postForm("/admin/users", {
      email: SECOND_ADMIN,
      displayName: "Priya Marsh",
      role: "admin",
      siteId: "",
      departmentId: "",
    });
    expect(added.status).toBe(200);
    const second = await k("users").where({ email: SECOND_ADMIN }).first("id");
    expect(await rolesOf(second.id)).toEqual(["admin"]);

    // A new colleague added as assessor exists at once, but the role waits for approval.
    const staff = await admin.postForm("/admin/users", {
      email: NEW_STAFF,
      displayName: "Tamsin Velde",
      role: "assessor",
      siteId: String(northId),
      departmentId: "",
    });
    expect(staff.status).toBe(200);
    expect(text(await staff.text())).toContain(
      `Added ${NEW_STAFF}. The Assessor role takes effect when another admin approves it.`,
    );
    const tamsin = await k("users").where({ email: NEW_STAFF }).first("id");
    expect(await rolesOf(tamsin.id)).toEqual([]);
    expect((await signIn(NEW_STAFF)).landedAt).toBe("/auth/not-provisioned");

    // An assessor-scope API key is created but does not work until approved.
    const keysBefore = await count("api_keys");
    const keyRes = await admin.postForm("/admin/api-keys", {
      intent: "create",
      name: "Clinic record bridge",
      role: "assessor",
      siteIds: [String(northId)],
    });
    expect(keyRes.status).toBe(200);
    const keyPage = await keyRes.text();
    expect(text(keyPage)).toContain("The key is created but does not work yet");
    const key = /data-testid="new-api-key">([^<]+)</.exec(keyPage)![1];
    expect(await count("api_keys")).toBe(keysBefore + 1);
    const worker = await k("workers").where({ site_id: northId }).orderBy("id").first("id");
    expect((await fetch(`${baseUrl()}/api/v1/me`, bearer(key))).status).toBe(401);
    expect((await fetch(`${baseUrl()}/api/v1/workers/${worker.id}/forecast`, bearer(key))).status).toBe(401);

    const pending = await k("privilege_requests").where({ status: "pending" }).orderBy("id").select("*");
    expect(pending.map((r) => [r.kind, r.role, r.requested_by])).toEqual([
      ["role", "assessor", adminId],
      ["api_key", "assessor", adminId],
    ]);
    // Mailed to the other admin (only): the new admin, the two requests.
    const requested = outbox().slice(mailBefore);
    expect(requested.length).toBeGreaterThanOrEqual(3);
    for (const m of requested) expect(m.to).toEqual([SECOND_ADMIN]);
    expect(requested.map((m) => m.subject)).toEqual(
      expect.arrayContaining([
        expect.stringContaining("asked a second admin to approve — Assessor for Tamsin Velde at North Yard"),
        expect.stringContaining(
          "asked a second admin to approve — API key “Clinic record bridge” (Assessor; North Yard)",
        ),
      ]),
    );
    expect(requested.find((m) => m.subject.includes("Tamsin"))!.text).toContain("/admin/approvals");

    // The requester cannot approve their own requests (document and .data URL).
    for (const r of pending) {
      const self = await admin.postForm("/admin/approvals", { intent: "approve", requestId: String(r.id) });
      expect(self.status).toBe(403);
      expect(text(await self.text())).toContain(
        "You asked for this yourself: another admin must approve or refuse it.",
      );
      expect(
        (await admin.postForm("/admin/approvals.data", { intent: "approve", requestId: String(r.id) })).status,
      ).toBe(403);
    }
    expect(await rolesOf(tamsin.id)).toEqual([]);
    expect((await fetch(`${baseUrl()}/api/v1/me`, bearer(key))).status).toBe(401);

    // The second admin sees both and approves them.
    const priya = (await signIn(SECOND_ADMIN)).client;
    const list = text(await (await priya.request("/admin/approvals")).text());
    expect(list).toContain("Assessor for Tamsin Velde at North Yard");
    expect(list).toContain("asked by Sam Okafor");
    const mailMid = outbox().length;
    for (const r of pending) {
      const ok = await priya.postForm("/admin/approvals", { intent: "approve", requestId: String(r.id) });
      expect(ok.status).toBe(200);
      expect(text(await ok.text())).toContain(`Approved: ${r.subject}.`);
    }
    expect(await rolesOf(tamsin.id)).toEqual(["assessor"]);
    expect((await signIn(NEW_STAFF)).landedAt).toBe("/assess");
    const me = await fetch(`${baseUrl()}/api/v1/me`, bearer(key));
    expect(me.status).toBe(200);
    expect(await me.json()).toMatchObject({ kind: "apiKey", role: "assessor", siteIds: [northId] });
    expect((await fetch(`${baseUrl()}/api/v1/workers/${worker.id}/forecast`, bearer(key))).status).toBe(200);
    // A decided request cannot be decided again.
    const again = await priya.postForm("/admin/approvals", { intent: "refuse", requestId: String(pending[0].id) });
    expect(again.status).toBe(409);

    const decided = await k("privilege_requests")
      .whereIn(
        "id",
        pending.map((r) => r.id),
      )
      .orderBy("id")
      .select("*");
    expect(decided.map((r) => [r.status, r.decided_by])).toEqual([
      ["approved", second.id],
      ["approved", second.id],
    ]);
    const approvedMail = outbox().slice(mailMid);
    expect(approvedMail).toHaveLength(2);
    for (const m of approvedMail) {
      expect(m.to).toEqual([PERSONA.admin]);
      expect(m.subject).toContain("Priya Marsh approved");
    }

    // The audit log, in the table and on the admin page.
    const audit = await k("privilege_audit").orderBy("id").select("actor_id", "event", "subject");
    const events = audit.map((a) => [a.actor_id, a.event, a.subject]);
    expect(events).toEqual(
      expect.arrayContaining([
        [adminId, "granted", "Admin for Priya Marsh at the whole organisation"],
        [adminId, "requested", "Assessor for Tamsin Velde at North Yard"],
        [adminId, "requested", "API key “Clinic record bridge” (Assessor; North Yard)"],
        [second.id, "approved", "Assessor for Tamsin Velde at North Yard"],
        [second.id, "approved", "API key “Clinic record bridge” (Assessor; North Yard)"],
      ]),
    );
    const page = text(await (await admin.request("/admin/approvals")).text());
    expect(page).toContain("Role and key audit log");
    expect(page).toMatch(/Priya Marsh\s*approved\s*Assessor for Tamsin Velde at North Yard/);
  });

  it("a refused request grants nothing, revokes the key, and is audited", async () => {
    const priya = (await signIn(SECOND_ADMIN)).client;
    const tamsin = await k("users").where({ email: NEW_STAFF }).first("id");
    const asked = await admin.postForm(`/admin/users/${tamsin.id}`, {
      intent: "add-role",
      role: "trainer",
      siteId: String(northId),
      departmentId: "",
    });
    expect(asked.status).toBe(200);
    expect(text(await asked.text())).toContain(
      "Requested. The Trainer role takes effect when another admin approves it.",
    );
    // Asking twice for the same grant is refused, naming the role field.
    const twice = await admin.postForm(`/admin/users/${tamsin.id}`, {
      intent: "add-role",
      role: "trainer",
      siteId: String(northId),
      departmentId: "",
    });
    expect(twice.status).toBe(409);
    const keyRes = await admin.postForm("/admin/api-keys", {
      intent: "create",
      name: "Training log bridge",
      role: "trainer",
      siteIds: [String(northId)],
    });
    const key = /data-testid="new-api-key">([^<]+)</.exec(await keyRes.text())![1];
    const pending = await k("privilege_requests").where({ status: "pending" }).orderBy("id").select("id", "subject");
    expect(pending).toHaveLength(2);
    // The person a grant is for cannot decide it either: Tamsin holds no admin role, so she is refused outright.
    const hers = (await signIn(NEW_STAFF)).client;
    expect(
      (await hers.postForm("/admin/approvals", { intent: "approve", requestId: String(pending[0].id) })).status,
    ).toBe(403);
    for (const r of pending) {
      const no = await priya.postForm("/admin/approvals", { intent: "refuse", requestId: String(r.id) });
      expect(no.status).toBe(200);
      expect(text(await no.text())).toContain(`Refused: ${r.subject}.`);
    }
    expect(await rolesOf(tamsin.id)).toEqual(["assessor"]);
    expect((await fetch(`${baseUrl()}/api/v1/me`, bearer(key))).status).toBe(401);
    expect(await k("api_keys").where({ name: "Training log bridge" }).whereNotNull("revoked_at").first()).toBeDefined();
    const refused = await k("privilege_audit").where({ event: "refused" }).pluck("subject");
    expect(refused).toEqual(
      expect.arrayContaining([
        "Trainer for Tamsin Velde at North Yard",
        "API key “Training log bridge” (Trainer; North Yard)",
      ]),
    );
  });

  it("a non-clinical key is usable at once and audited as created", async () => {
    const res = await admin.postForm("/admin/api-keys", {
      intent: "create",
      name: "Rota bridge",
      role: "coordinator",
      siteIds: [String(northId)],
    });
    const key = /data-testid="new-api-key">([^<]+)</.exec(await res.text())![1];
    expect((await fetch(`${baseUrl()}/api/v1/me`, bearer(key))).status).toBe(200);
    expect(await k("privilege_audit").where({ event: "key-created" }).pluck("subject")).toContain(
      "API key “Rota bridge” (Coordinator; North Yard)",
    );
  });
});

afterAll(async () => {
  // Other files share this database: take the people and keys added here out again.
  await k("api_keys").whereIn("name", ["Clinic record bridge", "Training log bridge", "Rota bridge"]).del();
  await k("users").whereIn("email", [SECOND_ADMIN, NEW_STAFF]).del();
});
