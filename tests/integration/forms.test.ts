import { describe, expect, it } from "vitest";
import { PERSONA, signIn, testDb } from "./helpers";

// Form handling shared by every converted page: bad input answers 400 with the schema's message on the
// field (aria-invalid, aria-describedby pointing at the message), a clash the model finds answers its
// own status on the field, a missing row is a 404 inside the signed-in shell, and nothing is written.
const k = testDb();

/** The message is shown in a field error, and the control that it describes is marked invalid. */
function expectFieldError(html: string, message: string) {
  const escaped = message.replace(/[.*+?^${}()|[\]\\]/g, "\\$&");
  const error = new RegExp(`<p id="([^"]+)" class="field-error">${escaped}</p>`).exec(html);
  expect(error, `field error "${message}"`).not.toBeNull();
  const control = new RegExp(
    `<(input|select|textarea)[^>]*aria-invalid="true"[^>]*aria-describedby="[^"]*${error![1]}`,
  );
  expect(html, `a control marked invalid and described by "${message}"`).toMatch(control);
}

async function count(table: string, where: Record<string, unknown> = {}) {
  return Number((await k(table).where(where).count({ n: "*" }).first())!.n);
}

describe("admin sites: one schema per intent, the model's clash on the field", () => {
  it("names the field on bad input and on a duplicate code, writes nothing, then adds the site", async () => {
    const { client } = await signIn(PERSONA.admin);
    const existing = await k("sites").orderBy("id").first("code");
    const before = await count("sites");

    const bad = await client.postForm("/admin/sites", { intent: "site", code: "!", name: "" });
    expect(bad.status).toBe(400);
    const badHtml = await bad.text();
    expectFieldError(badHtml, "Code: 2–20 letters, digits or dashes.");
    expectFieldError(badHtml, "Enter the site&#x27;s name.");

    const duplicate = await client.postForm("/admin/sites", { intent: "site", code: existing.code, name: "Again" });
    expect(duplicate.status).toBe(409);
    expectFieldError(await duplicate.text(), `Site code ${existing.code} is already used.`);

    const unknown = await client.postForm("/admin/sites", { intent: "demolish", code: "QQ", name: "Nope" });
    expect(unknown.status).toBe(400);
    expect(await unknown.text()).toContain("Intent: this form&#x27;s action is not known");
    expect(await count("sites")).toBe(before);

    const ok = await client.postForm("/admin/sites", { intent: "site", code: "fm-1", name: "Forms test site" });
    try {
      expect(ok.status).toBe(200);
      expect(await ok.text()).toContain("Site added.");
      expect(await k("sites").where({ code: "FM-1" }).first()).toBeDefined();
    } finally {
      // Other test files share this database: leave the sites as the seed made them.
      await k("sites").where({ code: "FM-1" }).del();
    }
  });
});

describe("a coordinator's trainer page", () => {
  it("names the field for bad hours and an end before the start; a clash is 409; another trainer is 404", async () => {
    const { client } = await signIn(PERSONA.coordinator);
    const trainer = await k("trainers").orderBy("id").first("id");
    const path = `/coordinate/trainers/${trainer.id}`;
    expect((await client.request(path)).status).toBe(200);
    const leaveBefore = await count("trainer_leave", { trainer_id: trainer.id });

    const hours = await client.postForm(path, { intent: "trainer", hoursPerWeek: "lots", traineesPerSession: "2" });
    expect(hours.status).toBe(400);
    expectFieldError(await hours.text(), "Hours per week must be a number.");

    const leave = await client.postForm(path, { intent: "add-leave", startsOn: "2027-03-10", endsOn: "2027-03-01" });
    expect(leave.status).toBe(400);
    expectFieldError(await leave.text(), "The end date must be on or after the start date.");
    expect(await count("trainer_leave", { trainer_id: trainer.id })).toBe(leaveBefore);

    const window = { intent: "add-pattern", weekday: "7", startTime: "06:00", endTime: "07:00" };
    const patternsBefore = await k("trainer_working_pattern").where({ trainer_id: trainer.id }).pluck("id");
    try {
      expect((await client.postForm(path, window)).status).toBe(200);
      const overlap = await client.postForm(path, { ...window, startTime: "06:30", endTime: "07:30" });
      expect(overlap.status).toBe(409);
      expectFieldError(await overlap.text(), "This time overlaps another working window on the same weekday.");
    } finally {
      // The allocation tests plan with these trainers: take the test's window out again.
      await k("trainer_working_pattern").where({ trainer_id: trainer.id }).whereNotIn("id", patternsBefore).del();
    }

    const elsewhere = await client.postForm("/coordinate/trainers/987654", { intent: "remove-leave", id: "1" });
    expect(elsewhere.status).toBe(404);
    expect(await elsewhere.text()).toContain("No such trainer at your sites.");

    const missing = await client.request("/coordinate/trainers/987654");
    expect(missing.status).toBe(404);
    const html = await missing.text();
    expect(html).toContain("No such trainer at your sites.");
    expect(html).toContain('aria-label="Main"');
  });
});

describe("the fleet page", () => {
  it("names the field for bad bookable hours, answers 404 for a window that does not exist, and writes nothing", async () => {
    const { client } = await signIn(PERSONA.coordinator);
    const unit = await k("device_units").orderBy("id").first("id", "bookable_hours_per_week", "status");
    const bad = await client.postForm("/coordinate/fleet", {
      intent: "unit",
      unitId: String(unit.id),
      status: unit.status,
      bookableHoursPerWeek: "200",
    });
    expect(bad.status).toBe(400);
    expectFieldError(await bad.text(), "At most 168 h.");
    const after = await k("device_units").where({ id: unit.id }).first("bookable_hours_per_week");
    expect(Number(after.bookable_hours_per_week)).toBe(Number(unit.bookable_hours_per_week));

    const gone = await client.postForm("/coordinate/fleet", { intent: "remove-maintenance", id: "987654" });
    expect(gone.status).toBe(404);
    expect(await gone.text()).toContain("No such maintenance window.");
  });
});

describe("the baseline measures page", () => {
  it("answers 409 on the code field for a duplicate measure code", async () => {
    const { client } = await signIn(PERSONA.assessor);
    const m = await k("measures").where({ entry: "manual" }).orderBy("id").first("code");
    const before = await count("measures");
    const res = await client.postForm("/assess/measures", {
      intent: "create",
      name: "Duplicate",
      code: m.code,
      unit: "pins",
      direction: "higher",
      entry: "manual",
      traceKind: "",
    });
    expect(res.status).toBe(409);
    expectFieldError(await res.text(), `Code: a measure with code ${m.code} exists already.`);
    expect(await count("measures")).toBe(before);
  });
});

describe("the norm sets page", () => {
  it("names the bad cell of a published table, asks for at least one measure, refuses a site out of scope", async () => {
    const { client } = await signIn(PERSONA.assessor);
    const m = await k("measures").where({ active: true }).orderBy("id").first("id", "name");
    const before = await count("norm_sets");
    const head = {
      intent: "published",
      name: "Forms test norms",
      source: "Invented table for a test",
      sourceDate: "2026-01-05",
    };

    const bad = await client.postForm("/assess/norms", { ...head, [`mean.${m.id}`]: "twelve", [`sd.${m.id}`]: "0" });
    expect(bad.status).toBe(400);
    const html = await bad.text();
    expectFieldError(html, `${m.name}: mean must be a number.`);
    expectFieldError(html, `${m.name}: SD must be a number above 0.`);

    const empty = await client.postForm("/assess/norms", { ...head, name: "X" });
    expect(empty.status).toBe(400);
    const emptyHtml = await empty.text();
    expect(emptyHtml).toContain("Enter a mean and SD for at least one measure.");
    expectFieldError(emptyHtml, "Name: at least 2 characters.");

    const site = await client.postForm("/assess/norms", { intent: "cohort", name: "Cohort", siteId: "987654" });
    expect(site.status).toBe(400);
    expectFieldError(await site.text(), "Site: choose one of your sites.");
    expect(await count("norm_sets")).toBe(before);

    const ok = await client.postForm("/assess/norms", { ...head, [`mean.${m.id}`]: "12.5", [`sd.${m.id}`]: "2.1" });
    const saved = await k("norm_sets").where({ name: head.name }).first("id");
    try {
      expect(ok.status).toBe(200);
      const values = await k("norm_values").where({ norm_set_id: saved.id }).select("measure_id", "mean", "sd", "n");
      expect(values.map((v) => [v.measure_id, Number(v.mean), Number(v.sd), v.n])).toEqual([[m.id, 12.5, 2.1, null]]);
    } finally {
      // New results are scored against the newest norm set: remove this one so other tests keep the seed's.
      if (saved) {
        await k("norm_values").where({ norm_set_id: saved.id }).del();
        await k("norm_sets").where({ id: saved.id }).del();
      }
    }
  });
});
