import ExcelJS from "exceljs";
import { describe, expect, inject, it } from "vitest";
import { buildProblem } from "~/models/allocation-problem.server";
import { runParametersSchema } from "~/schemas/allocation";
import { readOutbox } from "../../scripts/smtp-catcher";
import { PERSONA, pageText, signIn, testDb, tickedBoxes } from "./helpers";

// Worker and trainer portals against the running stack and the invented demo (seeds/07_portals_demo.ts:
// two worker accounts among Ines Calloway's trainees, her scheduled sessions). Each test makes the rows it
// changes (sessions dated from now) so that the shared database stays usable by other files.
const k = testDb();
const outbox = () => readOutbox(inject("outboxDir"));
const ines = async () =>
  (await k("trainers as t").join("users as u", "u.id", "t.user_id").where("u.email", PERSONA.trainer).first("t.id"))
    .id as number;
const worker = async (number: string) => k("workers").where({ employee_number: number }).first();
const userEmail = async (workerId: number) =>
  (await k("users as u").join("workers as w", "w.user_id", "u.id").where("w.id", workerId).first("u.email"))
    .email as string;
const device = async (code: string) => await k("device_types").where({ code }).first("id", "wear_time_limit_minutes");

/** seeds/07's worker accounts besides Amara, by employee number: [0] has sessions logged, [1] withdraws; with their course's device. */
async function portalAccount(i: 0 | 1) {
  const trainer = await ines();
  const rows = await k("workers as w")
    .join("users as u", "u.id", "w.user_id")
    .join("device_courses as c", "c.worker_id", "w.id")
    .join("trainer_certifications as tc", function () {
      this.on("tc.device_type_id", "c.device_type_id").andOn("tc.trainer_id", k.raw("?", [trainer]));
    })
    .whereNot("w.employee_number", "HV-00001")
    .whereIn("c.status", ["training", "paused"])
    .whereNot("u.email", "like", "first.session.%")
    .select("w.employee_number", "c.device_type_id")
    .orderBy(["w.employee_number", "c.device_type_id"]);
  const numbers = [...new Set(rows.map((r) => r.employee_number as string))];
  expect(numbers.length).toBeGreaterThanOrEqual(2);
  const w = await worker(numbers[i]);
  const d = await k("device_types")
    .where({ id: rows.find((r) => r.employee_number === numbers[i])!.device_type_id })
    .first("id", "code", "wear_time_limit_minutes");
  return { w, device: d as { id: number; code: string; wear_time_limit_minutes: number } };
}
const hoursFromNow = (h: number) => new Date(Date.now() + h * 3_600_000).toISOString();

/**
 * A start `hoursAgo` before now, but never before this week's Monday 00:00 (UTC digits, stored as the site's
 * wall-clock time: inside the trainer's week on the demo's UK clock, which is UTC or an hour ahead).
 */
function startThisWeek(hoursAgo: number): Date {
  const now = new Date();
  const monday = new Date(
    Date.UTC(now.getUTCFullYear(), now.getUTCMonth(), now.getUTCDate() - ((now.getUTCDay() + 6) % 7)),
  );
  const start = new Date(Math.max(now.getTime() - hoursAgo * 3_600_000, monday.getTime()));
  start.setUTCSeconds(0, 0);
  return start;
}

async function scheduleSession(
  workerId: number,
  deviceTypeId: number,
  trainerId: number,
  startIso: string,
  minutes = 60,
) {
  const [row] = await k("training_sessions")
    .insert({
      worker_id: workerId,
      device_type_id: deviceTypeId,
      trainer_id: trainerId,
      scheduled_start: startIso,
      scheduled_end: new Date(new Date(startIso).getTime() + minutes * 60_000).toISOString(),
      status: "scheduled",
      created_at: new Date().toISOString(),
    })
    .returning("id");
  return row.id as number;
}

/** Every employee number in a text: a worker's pages may only ever name their own. */
function employeeNumbers(text: string): Set<string> {
  return new Set(text.match(/HV-\d{5}/g) ?? []);
}

async function xlsxText(buf: ArrayBuffer): Promise<string> {
  const wb = new ExcelJS.Workbook();
  await wb.xlsx.load(buf);
  const parts: string[] = [];
  wb.eachSheet((ws) => ws.eachRow((row) => row.eachCell((c) => parts.push(String(c.value ?? "")))));
  return parts.join("\n");
}

const WORKER_PAGES = [
  "/me",
  "/me/consent",
  "/me/record",
  "/me/review",
  "/me/export.json",
  "/me/calendar.ics",
  "/api/v1/me/plan",
];

describe("a worker reaches only their own data", () => {
  it("every worker route answers with the signed-in worker's data whatever ids are put in the URL", async () => {
    const amara = await worker("HV-00001");
    const other = (await portalAccount(0)).w;
    const { client, landedAt } = await signIn(PERSONA.worker);
    expect(landedAt).toBe("/me");
    for (const page of WORKER_PAGES) {
      for (const q of ["", `?workerId=${other.id}`, `?worker=${other.id}&id=${other.id}&sessionId=${other.id}`]) {
        const res = await client.request(`${page}${q}`);
        expect(res.status, `${page}${q}`).toBe(200);
        const body = await res.text();
        const numbers = employeeNumbers(body);
        for (const n of numbers) expect(n, `${page}${q} names another worker`).toBe("HV-00001");
        if (page === "/me" || page.startsWith("/me/export") || page.startsWith("/api"))
          expect(numbers.has("HV-00001"), page).toBe(true);
      }
    }
    // The JSON export holds exactly Amara's rows, checked against the database.
    const all = await (await client.request(`/me/export.json?workerId=${other.id}`)).json();
    expect(all.worker.employeeNumber).toBe("HV-00001");
    const sessions = Number((await k("training_sessions").where({ worker_id: amara.id }).count({ n: "*" }).first())?.n);
    expect(all.sessions).toHaveLength(sessions);
    const consents = Number((await k("consent_records").where({ worker_id: amara.id }).count({ n: "*" }).first())?.n);
    expect(all.consent).toHaveLength(consents);
    expect(all.forecasts.length).toBe(
      Number((await k("forecasts").where({ worker_id: amara.id }).count({ n: "*" }).first())?.n),
    );
    // The spreadsheet as well.
    const xlsx = await client.request(`/me/export.xlsx?workerId=${other.id}`);
    expect(xlsx.headers.get("Content-Type")).toContain("spreadsheetml");
    const text = await xlsxText(await xlsx.arrayBuffer());
    expect([...employeeNumbers(text)]).toEqual(["HV-00001"]);
    expect(text).toContain("Amara");
    // The plan API: only Amara's sessions, checked against the database.
    const plan = await (await client.request(`/api/v1/me/plan?workerId=${other.id}`)).json();
    const mine = new Set((await k("training_sessions").where({ worker_id: amara.id }).select("id")).map((r) => r.id));
    expect(plan.sessions.length).toBeGreaterThan(0);
    for (const s of plan.sessions) expect(mine.has(s.id)).toBe(true);
  });

  it("staff routes that take a worker or session id refuse a worker (403)", async () => {
    const other = (await portalAccount(0)).w;
    const session = await k("training_sessions").where({ worker_id: other.id }).first("id", "device_type_id");
    const { client } = await signIn(PERSONA.worker);
    for (const path of [
      `/forecast/${other.id}`,
      `/progress/${other.id}/${session.device_type_id}`,
      `/assess/workers/${other.id}`,
      `/train/sessions/${session.id}`,
      `/api/v1/workers/${other.id}/forecast`,
      "/assess/reviews",
      "/train",
      "/forecast",
      "/progress",
    ]) {
      const res = await client.request(path);
      expect(res.status, path).toBe(403);
      expect(employeeNumbers(await res.text()).has(other.employee_number), path).toBe(false);
    }
    // POSTs with another worker's id: refused, and nothing about the other worker changes.
    const before = await k("training_sessions").where({ id: session.id }).first();
    expect((await client.postForm(`/train/sessions/${session.id}`, { intent: "no_show" })).status).toBe(403);
    expect(
      (
        await client.postForm(`/progress/${other.id}/${session.device_type_id}`, {
          intent: "log",
          durationHours: "1",
          taskScore: "0.5",
        })
      ).status,
    ).toBe(403);
    expect(await k("training_sessions").where({ id: session.id }).first()).toEqual(before);
  });

  it("an API key has no worker behind it and gets no plan", async () => {
    const anon = await fetch(`${inject("baseUrl")}/api/v1/me/plan`);
    expect(anon.status).toBe(401);
    expect((await anon.json()).error).toMatch(/Authentication required/);
  });
});

describe("the worker home", () => {
  it("shows the device cautions before the first session, with the session's date, place, device and trainer", async () => {
    // An invented worker with no training yet gets an account here (test data only).
    const w = await k("workers")
      .whereNull("user_id")
      .whereNotExists(k("training_sessions").whereRaw("training_sessions.worker_id = workers.id"))
      .whereNot("stage", "withdrawn")
      .first();
    const email = `first.session.${w.id}@harrowvale.example`;
    const now = new Date().toISOString();
    const [u] = await k("users")
      .insert({ email, display_name: `${w.given_name} ${w.family_name}`, active: true, created_at: now })
      .returning("id");
    await k("role_assignments").insert({
      user_id: u.id,
      role: "worker",
      site_id: w.site_id,
      department_id: w.department_id,
      created_at: now,
    });
    await k("workers").where({ id: w.id }).update({ user_id: u.id });
    const foot = await device("SRF-FOOT");
    const start = new Date(Date.now() + 72 * 3_600_000);
    start.setUTCHours(9, 30, 0, 0);
    await scheduleSession(w.id, foot.id, await ines(), start.toISOString(), 60);
    // A session as the allocation area publishes it: site wall-clock time without a zone.
    const day2 = new Date(start.getTime() + 24 * 3_600_000).toISOString().slice(0, 10);
    await k("training_sessions").insert({
      worker_id: w.id,
      device_type_id: foot.id,
      trainer_id: await ines(),
      scheduled_start: `${day2}T14:15:00`,
      scheduled_end: `${day2}T15:00:00`,
      status: "scheduled",
      created_at: now,
    });
    const { client } = await signIn(email);
    const html = (await (await client.request("/me")).text()).replace(/<!-- -->/g, "");
    expect(html).toContain("Before your first session");
    expect(html).toContain("Stop at once on pain, numbness");
    expect(html).toContain("09:30–10:30");
    expect(html).toContain("14:15–15:00");
    const ics = await (await client.request("/me/calendar.ics")).text();
    // The demo sites keep UK time: the calendar names the zone beside the wall-clock digits.
    expect(ics).toContain(`DTSTART;TZID=Europe/London:${day2.replace(/-/g, "")}T141500`);
    expect(html).toContain("Foot-driven supernumerary finger");
    expect(html).toContain("Trainer: Ines Calloway");
    expect(html).toContain(
      `${start.getUTCDate()} ${start.toLocaleString("en-GB", { month: "short", timeZone: "UTC" })} ${start.getUTCFullYear()}`,
    );
  });
});

describe("my record", () => {
  it("shows the worker who read their data: a staff read appears in their access log, nobody else's reads do", async () => {
    const me = (await portalAccount(1)).w;
    const { client: assessor } = await signIn(PERSONA.assessor2);
    expect((await assessor.request(`/forecast/${me.id}`)).status).toBe(200);
    expect((await assessor.request(`/forecast/${(await portalAccount(0)).w.id}`)).status).toBe(200);
    const mine = Number((await k("access_log").where({ worker_id: me.id }).count({ n: "*" }).first())?.n);
    const { client } = await signIn(await userEmail(me.id));
    const page = (await (await client.request("/me/record")).text()).replace(/<!-- -->/g, "");
    expect(page).toContain("Rhea Lindqvist");
    expect(page).toContain("read forecast");
    const rows = page.match(/<tr><td>/g)?.length ?? 0;
    expect(rows).toBe(mine); // one row per access to MY record, none of the other account's
    const all = await (await client.request("/me/export.json")).json();
    expect(all.accessLog).toHaveLength(mine);
  });
});

describe("consent from the worker portal", () => {
  it("withdrawing planning erases forecasts, cancels future sessions, notifies the site's coordinators and touches no one else", async () => {
    const me = (await portalAccount(1)).w;
    const other = (await portalAccount(0)).w;
    const arm = (await portalAccount(1)).device;
    const trainer = await ines();
    const future = await scheduleSession(me.id, arm.id, trainer, hoursFromNow(50), 60);
    const past = await scheduleSession(me.id, arm.id, trainer, hoursFromNow(-50), 60);
    const otherFuture = await scheduleSession(
      other.id,
      (await portalAccount(0)).device.id,
      trainer,
      hoursFromNow(51),
      60,
    );
    expect(Number((await k("forecasts").where({ worker_id: me.id }).count({ n: "*" }).first())?.n)).toBeGreaterThan(0);
    const otherConsentBefore = await k("consent_records").where({ worker_id: other.id }).orderBy("id");
    const otherForecastsBefore = await k("forecasts").where({ worker_id: other.id }).orderBy("id");
    const futureCount = Number(
      (
        await k("training_sessions")
          .where({ worker_id: me.id, status: "scheduled" })
          .where("scheduled_start", ">=", new Date().toISOString())
          .count({ n: "*" })
          .first()
      )?.n,
    );
    expect(futureCount).toBeGreaterThanOrEqual(1);

    // The next allocation run's pool considers this worker (listed, left out only because already in training).
    const nextMonday = new Date();
    nextMonday.setUTCDate(nextMonday.getUTCDate() + ((8 - nextMonday.getUTCDay()) % 7 || 7));
    const params = runParametersSchema.parse({
      startDate: nextMonday.toISOString().slice(0, 10),
      horizonWeeks: 4,
      fairnessShare: 0.2,
      pool: { siteIds: [me.site_id] },
    });
    const scope = { allSites: true, siteIds: [], departmentIds: [] };
    const inPool = (snap: Awaited<ReturnType<typeof buildProblem>>) =>
      snap.excluded.some((e) => e.workerId === me.id) || snap.calendar.workers.some((w) => w.workerId === me.id);
    expect(inPool(await buildProblem(params, scope, k))).toBe(true);

    const { client } = await signIn(await userEmail(me.id));
    const page = await (await client.request("/me/consent")).text();
    const text = await k("consent_text_versions").where({ purpose: "planning" }).orderBy("id", "desc").first("body");
    expect(page).toContain(text.body.slice(0, 40));

    // No confirmation: refused with the field named, nothing erased.
    // Given: the form is a summary with "Change"; the withdrawal sits behind it, with the one confirmation pattern.
    const planningCard = page.slice(
      page.indexOf('data-testid="consent-planning"'),
      page.indexOf('data-testid="consent-model"'),
    );
    expect(planningCard).toContain('data-testid="consent-change-planning"');
    expect(planningCard).toContain('data-testid="withdraw-planning"');
    expect(pageText(planningCard)).toContain(
      "The erasure cannot be undone: erased data do not come back. Consent can be given again later",
    );
    expect(tickedBoxes(planningCard)).toEqual([]);

    // No confirmation: refused with the field named, nothing erased.
    const unconfirmed = await client.postForm("/me/consent", { intent: "withdraw", purpose: "planning" });
    expect(unconfirmed.status).toBe(400);
    expect(pageText(await unconfirmed.text())).toContain("Confirm withdrawal: tick the box");
    expect(Number((await k("forecasts").where({ worker_id: me.id }).count({ n: "*" }).first())?.n)).toBeGreaterThan(0);

    // Confirmed, with another worker's id slipped into the form: only the signed-in worker is affected.
    const res = await client.postForm("/me/consent", {
      intent: "withdraw",
      purpose: "planning",
      confirmWithdraw: "on",
      workerId: String(other.id),
    });
    expect(res.status).toBe(200);
    expect(await res.text()).toContain("Your planning consent is withdrawn");
    const last = await k("consent_records")
      .where({ worker_id: me.id, purpose: "planning" })
      .orderBy("id", "desc")
      .first();
    expect(last.status).toBe("withdrawn");
    expect(last.recorded_by).toBe(
      (
        await k("users")
          .where({ email: await userEmail(me.id) })
          .first("id")
      ).id,
    );
    expect(
      Number(
        (await k("consent_records").where({ worker_id: me.id, purpose: "planning" }).count({ n: "*" }).first())?.n,
      ),
    ).toBe(1);
    expect(Number((await k("forecasts").where({ worker_id: me.id }).count({ n: "*" }).first())?.n)).toBe(0);
    expect((await k("training_sessions").where({ id: future }).first()).status).toBe("cancelled");
    expect((await k("training_sessions").where({ id: past }).first()).status).toBe("scheduled"); // the past is not rewritten
    expect(
      await k("training_sessions")
        .where({ worker_id: me.id, status: "scheduled" })
        .where("scheduled_start", ">=", new Date().toISOString())
        .first(),
    ).toBeUndefined();
    expect((await k("training_sessions").where({ id: otherFuture }).first()).status).toBe("scheduled");
    expect(await k("consent_records").where({ worker_id: other.id }).orderBy("id")).toEqual(otherConsentBefore);
    expect(await k("forecasts").where({ worker_id: other.id }).orderBy("id")).toEqual(otherForecastsBefore);
    // …and the next run's pool no longer has them at all (planning consent in force).
    expect(inPool(await buildProblem(params, scope, k))).toBe(false);

    // The North Yard coordinator (organisation-wide Tobias Renn included) is told.
    const coordinators = (
      await k("role_assignments as a")
        .join("users as u", "u.id", "a.user_id")
        .where("a.role", "coordinator")
        .where("u.active", true) // a deactivated coordinator (another test adds one) is not told
        .where((q) =>
          q
            .where((o) => o.whereNull("a.site_id").whereNull("a.department_id"))
            .orWhere("a.site_id", me.site_id)
            .orWhere("a.department_id", me.department_id),
        )
        .distinct("u.email")
    )
      .map((r) => r.email as string)
      .sort();
    expect(coordinators.length).toBeGreaterThan(0);
    const mail = outbox().find((m) => m.subject === `Consent withdrawn: ${me.employee_number} leaves training plans`);
    expect(mail).toBeTruthy();
    expect([...mail!.to].sort()).toEqual(coordinators);
    expect(mail!.text).toContain(
      `${futureCount} future scheduled session${futureCount === 1 ? " was" : "s were"} cancelled`,
    );

    // Withdrawing again: a clear refusal.
    const again = await client.postForm("/me/consent", {
      intent: "withdraw",
      purpose: "planning",
      confirmWithdraw: "on",
    });
    expect(again.status).toBe(409);
    expect(await again.text()).toContain("There is no given planning consent to withdraw.");

    // Withdrawn: the give form is back, its box not ticked.
    const regive = await (await client.request("/me/consent")).text();
    const card = regive.slice(
      regive.indexOf('data-testid="consent-planning"'),
      regive.indexOf('data-testid="consent-model"'),
    );
    expect(card).toContain('name="confirmRead"');
    expect(tickedBoxes(card)).toEqual([]);

    // Giving it again records a self-given consent (no witness) on the current text and brings the forecast back.
    const give = await client.postForm("/me/consent", { intent: "give", purpose: "planning", confirmRead: "on" });
    expect(give.status).toBe(200);
    const renewed = await k("consent_records")
      .where({ worker_id: me.id, purpose: "planning" })
      .orderBy("id", "desc")
      .first();
    expect(renewed.status).toBe("given");
    expect(renewed.witness_user_id).toBeNull();
    expect(Number((await k("forecasts").where({ worker_id: me.id }).count({ n: "*" }).first())?.n)).toBeGreaterThan(0);
  });
});

describe("review requests", () => {
  it("a worker asks, an assessor of the site answers in the app, and the worker is e-mailed", async () => {
    const me = (await portalAccount(0)).w;
    const email = await userEmail(me.id);
    const { client } = await signIn(email);
    const short = await client.postForm("/me/review", { subject: "forecast", message: "too high" });
    expect(short.status).toBe(400);
    expect(await short.text()).toContain("Message: say in a sentence or two");
    const message = `Integration check ${Date.now()}: my forecast looks too high for me.`;
    expect(
      (
        await client.postForm("/me/review", {
          subject: "forecast",
          deviceTypeId: String((await portalAccount(0)).device.id),
          message,
          workerId: "1",
        })
      ).status,
    ).toBe(200);
    const row = await k("review_requests").where({ message }).first();
    expect(row.worker_id).toBe(me.id);
    expect(row.status).toBe("open");

    for (const who of [PERSONA.trainer, PERSONA.coordinator, PERSONA.manager, PERSONA.admin]) {
      const { client: c } = await signIn(who);
      expect((await c.request("/assess/reviews")).status, who).toBe(403);
      expect(
        (await c.postForm("/assess/reviews", { reviewId: String(row.id), answer: "Not mine to answer." })).status,
        who,
      ).toBe(403);
    }
    const { client: assessor } = await signIn(PERSONA.assessor);
    const queue = await (await assessor.request("/assess/reviews")).text();
    expect(queue).toContain(message.slice(0, 30));
    const empty = await assessor.postForm("/assess/reviews", { reviewId: String(row.id), answer: "" });
    expect(empty.status).toBe(400);
    expect(await empty.text()).toContain("Answer: write your answer");
    const answer = "We looked at it together with your last sessions: the forecast is being updated as you train.";
    const ok = await assessor.postForm("/assess/reviews", { reviewId: String(row.id), answer: answer });
    expect(ok.status, (await ok.clone().text()).match(/role="alert"[^<]*</)?.[0] ?? "").toBe(200);
    const answered = await k("review_requests").where({ id: row.id }).first();
    expect(answered.status).toBe("answered");
    expect(answered.answer).toBe(answer);
    const mail = outbox().find(
      (m) => m.to.includes(email) && m.subject === "Your review request has been answered" && m.text.includes(answer),
    );
    expect(mail).toBeTruthy();
    expect(await (await client.request("/me/review")).text()).toContain(answer);
  });
});

describe("the trainer's day and session log", () => {
  it("lists only the trainer's own sessions and refuses another trainer's session (403)", async () => {
    const trainer = await ines();
    const { w, device: foot } = await portalAccount(0);
    const mine = await scheduleSession(w.id, foot.id, trainer, startThisWeek(0).toISOString(), 60);
    const otherTrainer = (await k("trainers").whereNot({ id: trainer }).first("id")).id;
    const stranger = await worker("HV-00200");
    const notMine = await scheduleSession(stranger.id, foot.id, otherTrainer, startThisWeek(0).toISOString(), 60);
    const { client } = await signIn(PERSONA.trainer);
    const home = await (await client.request("/train")).text();
    expect(home).toContain(`session-${mine}`);
    expect(home).not.toContain(`session-${notMine}`);
    expect(home).not.toContain("HV-00200");
    const r = await client.request(`/train/sessions/${notMine}`);
    expect(r.status).toBe(403);
    expect(await r.text()).not.toContain("HV-00200");
    expect((await client.request("/train/sessions/99999999")).status).toBe(403);
    const before = await k("training_sessions").where({ id: notMine }).first();
    expect((await client.postForm(`/train/sessions/${notMine}`, { intent: "no_show" })).status).toBe(403);
    expect(
      (
        await client.postForm(`/train/sessions/${notMine}`, {
          intent: "log",
          start: "2026-12-01T08:00",
          end: "2026-12-01T08:30",
          taskScore: "0.5",
        })
      ).status,
    ).toBe(403);
    expect(await k("training_sessions").where({ id: notMine }).first()).toEqual(before);
    // Marking no-show on one of her own.
    expect((await client.postForm(`/train/sessions/${mine}`, { intent: "no_show", reason: "leave" })).status).toBe(200);
    const marked = await k("training_sessions").where({ id: mine }).first();
    expect([marked.status, marked.no_show_reason]).toEqual(["no_show", "leave"]);
  });

  it("logs a score through the forecast area's logSessionResult; a severe event pauses the worker and e-mails the site's assessors", async () => {
    const trainer = await ines();
    const { w, device: foot } = await portalAccount(0);
    const start = startThisWeek(2);
    const local = (d: Date) => d.toISOString().slice(0, 16);
    const s1 = await scheduleSession(w.id, foot.id, trainer, start.toISOString(), 45);
    const courseBefore = await k("device_courses").where({ worker_id: w.id, device_type_id: foot.id }).first();
    const forecastBefore = await k("forecasts").where({ worker_id: w.id, device_type_id: foot.id }).first();
    const { client } = await signIn(PERSONA.trainer);

    // Bad input names the field; nothing is written.
    const bad = await client.postForm(`/train/sessions/${s1}`, {
      intent: "log",
      start: local(start),
      end: local(new Date(start.getTime() - 60_000)),
      taskScore: "1.4",
    });
    expect(bad.status).toBe(400);
    const badText = await bad.text();
    expect(badText).toContain("End: must be after the start.");
    expect(badText).toContain("Task score: a number between 0 and 1.");
    // (A session over the wear-time limit is saved with a safety finding: tests/integration/course-review.test.ts.)
    expect((await k("training_sessions").where({ id: s1 }).first()).status).toBe("scheduled");

    // A 45-minute session with score 0.6437 and a mild skin mark.
    const ok = await client.postForm(`/train/sessions/${s1}`, {
      intent: "log",
      start: local(start),
      end: local(new Date(start.getTime() + 45 * 60_000)),
      taskScore: "0.6437",
      notes: "Steady grip.",
      ae_pain: "none",
      ae_skin: "mild",
      ae_skin_notes: "Slight redness under the strap.",
    });
    expect(ok.status, (await ok.clone().text()).match(/role="alert"[^<]*</)?.[0] ?? "").toBe(200);
    const logged = await k("training_sessions").where({ id: s1 }).first();
    expect(logged.status).toBe("attended");
    expect(Number(logged.task_score)).toBe(0.6437);
    // The day view shows the session as logged but carries no result: scores are read (and logged) on the session page.
    const day = await (await client.request("/train")).text();
    expect(day).toContain(`session-${s1}`);
    expect(day).not.toContain("0.6437");
    expect(await (await client.request(`/train/sessions/${s1}`)).text()).toContain("0.64");
    expect(Number(logged.duration_hours)).toBe(0.75);
    expect(Number(logged.cumulative_hours)).toBeCloseTo(Number(courseBefore.cumulative_hours) + 0.75, 9);
    const course = await k("device_courses").where({ worker_id: w.id, device_type_id: foot.id }).first();
    expect(Number(course.cumulative_hours)).toBeCloseTo(Number(courseBefore.cumulative_hours) + 0.75, 9);
    expect(course.status).toBe("training");
    const forecast = await k("forecasts").where({ worker_id: w.id, device_type_id: foot.id }).first();
    expect(Number(forecast.hours_done)).toBeCloseTo(Number(course.cumulative_hours), 9);
    expect(forecast.computed_at).not.toBe(forecastBefore.computed_at);
    const mild = await k("adverse_events").where({ session_id: s1 });
    expect(mild.map((e) => [e.kind, e.severity])).toEqual([["skin", "mild"]]);
    expect(await k("access_log").where({ worker_id: w.id, resource: "sessions" }).first()).toBeTruthy();

    // Worker's progress chart data now hold the new point.
    const { client: workerClient } = await signIn(await userEmail(w.id));
    const home = (await (await workerClient.request("/me")).text()).replace(/<!-- -->/g, "");
    expect(home).toContain(`${(Number(course.cumulative_hours)).toFixed(1)} h practised`);

    // A severe event: the course and the worker pause, a stage change is recorded, the assessors are e-mailed.
    const s2start = new Date(start.getTime() + 60 * 60_000);
    const s2 = await scheduleSession(w.id, foot.id, trainer, s2start.toISOString(), 30);
    const severe = await client.postForm(`/train/sessions/${s2}`, {
      intent: "log",
      start: local(s2start),
      end: local(new Date(s2start.getTime() + 30 * 60_000)),
      taskScore: "0.58",
      ae_numbness: "severe",
      ae_numbness_notes: "Numb toes after 25 minutes; session stopped.",
    });
    expect(severe.status).toBe(200);
    expect(await severe.text()).toContain("Training is paused");
    const paused = await k("device_courses").where({ worker_id: w.id, device_type_id: foot.id }).first();
    expect(paused.status).toBe("paused");
    expect(paused.pause_reason).toContain("numbness");
    expect((await worker(w.employee_number)).stage).toBe("paused");
    const change = await k("stage_changes")
      .where({ worker_id: w.id, to_stage: "paused" })
      .orderBy("id", "desc")
      .first();
    expect(change.device_type_id).toBe(foot.id);
    expect(change.actor_user_id).toBe((await k("users").where({ email: PERSONA.trainer }).first("id")).id);
    const assessors = (
      await k("role_assignments as a")
        .join("users as u", "u.id", "a.user_id")
        .where("a.role", "assessor")
        .where((q) =>
          q
            .where((o) => o.whereNull("a.site_id").whereNull("a.department_id"))
            .orWhere("a.site_id", w.site_id)
            .orWhere("a.department_id", w.department_id),
        )
        .distinct("u.email")
    )
      .map((r) => r.email as string)
      .sort();
    const mail = outbox().find(
      (m) =>
        m.subject === `Training paused: severe adverse event for ${w.employee_number}` && m.text.includes("Numb toes"),
    );
    expect(mail).toBeTruthy();
    expect([...mail!.to].sort()).toEqual(assessors);

    // Paused: a further session cannot be logged.
    const s3start = new Date(start.getTime() + 100 * 60_000);
    const s3 = await scheduleSession(w.id, foot.id, trainer, s3start.toISOString(), 30);
    const blocked = await client.postForm(`/train/sessions/${s3}`, {
      intent: "log",
      start: local(s3start),
      end: local(new Date(s3start.getTime() + 30 * 60_000)),
      taskScore: "0.6",
    });
    expect(blocked.status).toBe(409);
    expect(await blocked.text()).toContain("This course is paused");
    expect((await k("training_sessions").where({ id: s3 }).first()).status).toBe("scheduled");
    expect(await (await workerClient.request("/me")).text()).toContain("Your training is paused");
  });
});

describe("consent on the assessor's worker page", () => {
  it("renders no ticked box before consent, then collapses what is given behind Change with the one withdrawal confirmation", async () => {
    const { client: assessor } = await signIn(PERSONA.assessor);
    const w = await k("workers")
      .where({ stage: "invited" })
      .whereNotExists(k("consent_records").whereRaw("consent_records.worker_id = workers.id"))
      .orderBy("id", "desc")
      .offset(1) // freshConsentedWorker takes the last one
      .first("id");
    const section = async () => {
      const html = await (await assessor.request(`/assess/workers/${w.id}`)).text();
      return html.slice(html.indexOf('data-testid="consent-section"'), html.indexOf("Consent history"));
    };
    const before = await section();
    expect(tickedBoxes(before)).toEqual([]);
    for (const pp of ["assessment", "planning", "model"]) expect(before).toContain(`name="purposes" value="${pp}"`);
    expect(before).not.toContain('data-testid="consent-change"');

    const me = await k("users").where({ email: PERSONA.assessor }).first("id");
    const res = await assessor.postForm(`/assess/workers/${w.id}`, {
      intent: "consent",
      purposes: ["assessment", "planning"],
      witnessUserId: String(me.id),
      confirmRead: "on",
    });
    expect(res.status).toBe(200);
    const after = await section();
    expect(tickedBoxes(after)).toEqual([]);
    // Only model is still asked for; the given purposes sit behind "Change", each with the shared confirmation.
    expect(after).toContain('name="purposes" value="model"');
    expect(after).not.toContain('name="purposes" value="assessment"');
    expect(after).toContain('data-testid="consent-change"');
    expect(after).toContain('data-testid="withdraw-assessment"');
    expect(after).toContain('data-testid="withdraw-planning"');
    expect(after).toContain('name="confirmWithdraw"');
    expect(pageText(after)).toContain(
      "The erasure cannot be undone: erased data do not come back. Consent can be given again later",
    );
    // The same wording and field as on the worker's own page; without the box ticked, nothing is withdrawn.
    const refused = await assessor.postForm(`/assess/workers/${w.id}`, { intent: "withdraw", purpose: "planning" });
    expect(refused.status).toBe(400);
    expect(pageText(await refused.text())).toContain("Confirm withdrawal: tick the box");
    const ok = await assessor.postForm(`/assess/workers/${w.id}`, {
      intent: "withdraw",
      purpose: "planning",
      confirmWithdraw: "on",
    });
    expect(ok.status).toBe(200);
    const last = await k("consent_records")
      .where({ worker_id: w.id, purpose: "planning" })
      .orderBy("id", "desc")
      .first();
    expect(last.status).toBe("withdrawn");
  });
});
