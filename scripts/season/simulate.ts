// A season in the life of a training programme, run through the app's own HTTP routes as each person would:
// signed in through the real OAuth2 flow, forms posted as the page's form posts them, the server's clock moved
// week by week. The database is only READ here (to find ids a person would pick from a page, and for the
// checks in report.ts); every change goes through a route. INVENTED people and data.
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import knex, { type Knex } from "knex";
import { addDays } from "../../app/dates/calendar";
import { knexConfig } from "../../knexfile";
import { Browserless } from "../browserless";
import { cohortSize, SEASON } from "./parameters";
import type { SeasonStack } from "./stack";

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../..");

export const STAFF = {
  admin: "sam.okafor@harrowvale.example",
  assessor: "morwenna.pike@harrowvale.example",
  assessor2: "rhea.lindqvist@harrowvale.example",
  coordinator: "tobias.renn@harrowvale.example",
} as const;

/** What the simulation did, for the checks of report.ts. */
export interface SeasonLog {
  hires: string[]; // employee numbers imported
  runs: number[]; // the published runs
  infeasibleRuns: number; // runs whose fairness share could not be met (started again without it)
  publishedTo: string[]; // every plan e-mail recipient the publish answers named, one entry per notice
  sessionsLogged: number;
  noShows: number;
  individualReads: number; // pages of one person's health data rendered
  planReads: number; // workers shown on the run pages opened (each run page shows every planned worker's plan)
  severe: { workerId: number; deviceTypeId: number; employeeNumber: string }[];
  resumed: { workerId: number; deviceTypeId: number }[];
  withdrawn: number[];
  leave: { trainerId: number; startsOn: string; endsOn: string } | null;
  maintenance: { unitId: number; startsOn: string; endsOn: string } | null;
  modelVersionId: number | null;
  weekTimings: number[]; // ms per simulated week
  phases: Record<string, number>; // ms spent per kind of work
  startedAt: string;
}

function mulberry32(seed: number) {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Pages that show one person's health data: each one rendered is one read the access log must hold. */
const INDIVIDUAL_PAGE = /^\/(assess\/workers\/\d+(\/sessions\/\d+|\/courses\/\d+)?|train\/sessions\/\d+)$/;

/** A standard normal draw (Box–Muller) from a uniform source. */
const normal = (draw: () => number) => Math.sqrt(-2 * Math.log(1 - draw())) * Math.cos(2 * Math.PI * draw());

class Person {
  constructor(
    readonly email: string,
    readonly client: Browserless,
    readonly reads: { n: number },
  ) {}

  static async signIn(base: string, email: string, reads: { n: number }): Promise<Person> {
    const client = new Browserless(base);
    const { url } = await client.follow(`/auth/start?login_hint=${encodeURIComponent(email)}`);
    if (new URL(url).pathname.startsWith("/sign-in") || new URL(url).pathname.startsWith("/auth"))
      throw new Error(`${email} could not sign in (landed at ${url})`);
    return new Person(email, client, reads);
  }

  /** A document answer (not `.data`) renders the page: on a person's page that is a read. */
  private counted(p: string, res: Response): Response {
    if (res.status === 200 && INDIVIDUAL_PAGE.test(new URL(p, this.client.base).pathname)) this.reads.n++;
    return res;
  }

  async page(p: string): Promise<string> {
    const res = this.counted(p, await this.client.request(p));
    const body = await res.text();
    if (res.status !== 200) throw new Error(`GET ${p} as ${this.email}: ${res.status} ${body.slice(0, 300)}`);
    return body;
  }

  /** Posts a form as the page's form does; `expect` the status the route answers on success. */
  async post(p: string, fields: Record<string, string | string[]>, expect = 200): Promise<Response> {
    const res = this.counted(p, await this.client.postForm(p, fields));
    if (res.status !== expect)
      throw new Error(
        `POST ${p} as ${this.email}: ${res.status}, expected ${expect}: ${(await res.text()).slice(0, 400)}`,
      );
    return res;
  }

  async upload(p: string, fields: Record<string, string>, file: { field: string; name: string; text: string }) {
    const form = new FormData();
    for (const [k, v] of Object.entries(fields)) form.append(k, v);
    form.append(file.field, new Blob([file.text], { type: "text/csv" }), file.name);
    return this.counted(p, await this.client.request(p, { method: "POST", body: form }));
  }
}

const inputValue = (html: string, name: string): string | null => {
  const tag = new RegExp(`<input[^>]*name="${name}"[^>]*>`).exec(html)?.[0];
  return tag ? (/value="([^"]*)"/.exec(tag)?.[1] ?? null) : null;
};

/** The demo trace files, varied per worker: scaling the sway and the tracking error moves those two measures. */
function traces(rand: () => number) {
  const read = (f: string) =>
    fs
      .readFileSync(path.join(root, "seeds/traces", f), "utf8")
      .trim()
      .split("\n");
  const swayScale = 0.7 + 0.7 * rand();
  const trackScale = 0.7 + 0.7 * rand();
  const sway = read("sway.csv").map((l, i) => {
    if (i === 0) return l;
    const [t, x, y] = l.split(",");
    return `${t},${(Number(x) * swayScale).toFixed(3)},${(Number(y) * swayScale).toFixed(3)}`;
  });
  const tracking = read("tracking.csv").map((l, i) => {
    if (i === 0) return l;
    const [t, target, cursor] = l.split(",");
    const c = Number(target) + (Number(cursor) - Number(target)) * trackScale;
    return `${t},${target},${c.toFixed(3)}`;
  });
  return [
    { kind: "sway", text: `${sway.join("\n")}\n` },
    { kind: "tracking", text: `${tracking.join("\n")}\n` },
    { kind: "timing", text: `${read("timing.csv").join("\n")}\n` },
    { kind: "glove", text: `${read("glove.csv").join("\n")}\n` },
  ];
}

// Rows read untyped, as the tests read them (a table named by a plain string takes Knex's untyped overload).
const untypedQuery = (k: Knex, table: string) => k(table);
export type SeasonDb = ((table: string) => ReturnType<typeof untypedQuery>) & Knex;
export function seasonDb(url: string): SeasonDb {
  return knex(knexConfig({ DATABASE_URL: url })) as SeasonDb;
}

export async function runSeason(stack: SeasonStack, say: (s: string) => void = () => {}): Promise<SeasonLog> {
  const k = seasonDb(stack.databaseUrl);
  const log: SeasonLog = {
    hires: [],
    runs: [],
    infeasibleRuns: 0,
    publishedTo: [],
    sessionsLogged: 0,
    noShows: 0,
    individualReads: 0,
    planReads: 0,
    severe: [],
    resumed: [],
    withdrawn: [],
    leave: null,
    maintenance: null,
    modelVersionId: null,
    weekTimings: [],
    phases: {},
    startedAt: `${SEASON.startMonday}T06:00:00.000Z`,
  };
  try {
    const base = stack.appUrl;
    let mark = performance.now();
    /** Books the time since the last mark to a phase. */
    const lap = (phase: string) => {
      const t = performance.now();
      log.phases[phase] = (log.phases[phase] ?? 0) + (t - mark);
      mark = t;
    };
    const reads = { n: 0 };
    const admin = await Person.signIn(base, STAFF.admin, reads);
    const assessor = await Person.signIn(base, STAFF.assessor, reads);
    const assessor2 = await Person.signIn(base, STAFF.assessor2, reads);
    const coordinator = await Person.signIn(base, STAFF.coordinator, reads);
    const assessorId = (await k("users").where({ email: STAFF.assessor }).first("id")).id as number;
    const sites = await k("sites")
      .whereIn("code", [...SEASON.sites])
      .orderBy("id")
      .select("id", "code");

    // The admin opens an intake department at each of the two sites.
    for (const s of sites)
      await admin.post("/admin/sites", {
        intent: "department",
        siteId: String(s.id),
        code: SEASON.intakeDepartment.code,
        name: SEASON.intakeDepartment.name,
      });
    const departments = await k("departments")
      .where({ code: SEASON.intakeDepartment.code })
      .whereIn(
        "site_id",
        sites.map((s) => s.id),
      )
      .orderBy("id")
      .pluck("id");

    const trainerRows = await k("trainers as t")
      .join("users as u", "u.id", "t.user_id")
      .whereIn(
        "t.site_id",
        sites.map((s) => s.id),
      )
      .orderBy("t.id")
      .select("t.id", "u.email");
    const trainers: { id: number; person: Person }[] = [];
    for (const t of trainerRows) trainers.push({ id: t.id, person: await Person.signIn(base, t.email, reads) });

    // Each worker's own learning curve: score = a − (a − s₀)·e^(−c·hours) + noise; c sets the hours it takes.
    const curves = new Map<number, { s0: number; c: number }>();
    const curve = (workerId: number) => {
      let c = curves.get(workerId);
      if (!c) {
        const draw = mulberry32(SEASON.seed + workerId * 104729);
        const s0 = 0.3 + 0.15 * draw();
        const hours = 8 * Math.exp(0.3 * normal(draw));
        c = { s0, c: Math.log((0.97 - s0) / (0.97 - 0.88)) / hours };
        curves.set(workerId, c);
      }
      return c;
    };
    const practised = new Map<string, number>();

    let hireNo = 0;
    const intake = async (count: number, on: string) => {
      const rows = ["Employee number,First name,Last name,E-mail,Site,Department"];
      const batch: string[] = [];
      for (let i = 0; i < count; i++) {
        hireNo++;
        const emp = `SE-${String(hireNo).padStart(4, "0")}`;
        const site = SEASON.sites[hireNo % SEASON.sites.length];
        rows.push(`${emp},Hire,Number ${hireNo},hire.${hireNo}@season.example,${site},${SEASON.intakeDepartment.code}`);
        batch.push(emp);
      }
      const up = await assessor.upload(
        "/assess/roster",
        {},
        { field: "roster", name: "intake.csv", text: `${rows.join("\n")}\n` },
      );
      if (up.status !== 302) throw new Error(`roster upload: ${up.status} ${(await up.text()).slice(0, 300)}`);
      const importPath = up.headers.get("Location")!;
      await assessor.page(importPath);
      await assessor.post(importPath, { intent: "import" });
      log.hires.push(...batch);
      const ids = await k("workers").whereIn("employee_number", batch).orderBy("id").pluck("id");
      if (ids.length !== count) throw new Error(`roster import: ${ids.length} of ${count} hires arrived`);
      // Consent witnessed by the assessor, then the baseline battery: four traces per worker.
      const baseline = async (id: number) => {
        await assessor.post(`/assess/workers/${id}`, {
          intent: "consent",
          purposes: ["assessment", "planning", "model"],
          witnessUserId: String(assessorId),
          confirmRead: "on",
        });
        const s = await assessor.post(`/assess/workers/${id}`, { intent: "session", assessedOn: on }, 302);
        const sessionPath = s.headers.get("Location")!;
        for (const t of traces(mulberry32(SEASON.seed + id * 31))) {
          const r = await assessor.upload(
            sessionPath,
            { intent: "upload", kind: t.kind, sampleRateHz: "" },
            { field: "trace", name: `${t.kind}.csv`, text: t.text },
          );
          if (r.status !== 200)
            throw new Error(`trace upload ${t.kind}: ${r.status} ${(await r.text()).slice(0, 300)}`);
        }
      };
      // Two assessment rooms work side by side.
      for (let i = 0; i < ids.length; i += 2) await Promise.all(ids.slice(i, i + 2).map(baseline));
    };

    for (let week = 0; week < SEASON.weeks; week++) {
      const t0 = performance.now();
      const monday = addDays(SEASON.startMonday, week * 7);
      stack.setClock(`${monday}T06:00:00.000Z`);
      say(`week ${week + 1}: ${monday}`);

      lap("other");
      for (const [w, n] of SEASON.intakes) if (w === week) await intake(n, monday);
      lap("intake: import, consent, baselines");

      if (week === SEASON.modelWeek) log.modelVersionId = await fitAndApprove(k, assessor, assessor2);

      if (week === SEASON.leaveWeeks[0] - 1) {
        const t = trainers[0];
        const leave = {
          trainerId: t.id,
          startsOn: addDays(SEASON.startMonday, SEASON.leaveWeeks[0] * 7),
          endsOn: addDays(SEASON.startMonday, SEASON.leaveWeeks[1] * 7 + 6),
        };
        await coordinator.post(`/coordinate/trainers/${t.id}`, {
          intent: "add-leave",
          startsOn: leave.startsOn,
          endsOn: leave.endsOn,
          reason: "Annual leave",
        });
        log.leave = leave;
      }
      if (week === SEASON.maintenanceWeeks[0] - 1) {
        // The unit that carried the most sessions so far.
        const unit = await k("training_sessions")
          .whereNotNull("device_unit_id")
          .whereIn("worker_id", k("workers").whereIn("department_id", departments).select("id"))
          .groupBy("device_unit_id")
          .orderByRaw("count(*) desc, device_unit_id")
          .first("device_unit_id as id");
        const m = {
          unitId: unit.id as number,
          startsOn: addDays(SEASON.startMonday, SEASON.maintenanceWeeks[0] * 7),
          endsOn: addDays(SEASON.startMonday, SEASON.maintenanceWeeks[1] * 7 + 6),
        };
        await coordinator.post("/coordinate/fleet", {
          intent: "add-maintenance",
          unitId: String(m.unitId),
          startsOn: m.startsOn,
          endsOn: m.endsOn,
          reason: "Actuator service",
        });
        log.maintenance = m;
      }
      if ((SEASON.withdrawalWeeks as readonly number[]).includes(week)) {
        const w = await k("workers")
          .whereIn("department_id", departments)
          .where({ stage: "training" })
          .whereNotIn("id", log.withdrawn)
          .orderBy("id", "desc")
          .first("id");
        if (w) {
          // The last one leaves the programme altogether (assessment consent: the data are erased); the others
          // only stop being planned (planning consent).
          const last = log.withdrawn.length === SEASON.withdrawalWeeks.length - 1;
          await assessor.post(`/assess/workers/${w.id}`, {
            intent: "withdraw",
            purpose: last ? "assessment" : "planning",
            confirmWithdraw: "on",
          });
          log.withdrawn.push(w.id);
        }
      }

      lap("other");
      // The coordinator's weekly run from this Monday, published once it is solved. When the fairness share
      // cannot be met the run page says so and advises a lower share: the coordinator starts again without it.
      let runPath = "";
      let version: string | null = null;
      for (const fairness of new Set([SEASON.fairnessSharePercent, 0])) {
        runPath = await startAndWait(coordinator, {
          label: `Season week ${week + 1}${fairness === SEASON.fairnessSharePercent ? "" : " (no fairness share)"}`,
          startDate: monday,
          horizonWeeks: String(SEASON.horizonWeeks),
          siteIds: sites.map((s) => String(s.id)),
          departmentIds: departments.map(String),
          planningQuantile: String(SEASON.planningQuantilePercent),
          fairnessShare: String(fairness),
        });
        const runPage = await coordinator.page(runPath);
        // The run page shows each planned worker's plan: one read per worker on it.
        log.planReads += Number(/Per-worker plan \( (\d+) \)/.exec(visible(runPage))?.[1] ?? Number.NaN);
        version = inputValue(runPage, "expectedPlanVersion");
        if (version != null) break;
        if (!runPage.includes("no feasible plan"))
          throw new Error(`${runPath}: no publish form: ${visible(runPage).slice(0, 2000)}`);
        log.infeasibleRuns++;
      }
      if (version == null) throw new Error(`week ${week + 1}: no run could be published`);
      const runId = Number(runPath.split("/").pop());
      log.runs.push(runId);
      const pub = await coordinator.post(`${runPath}.data`, {
        intent: "publish",
        expectedPlanVersion: version,
        confirm: "yes",
      });
      const answer = await pub.text();
      if (!answer.includes("notified")) throw new Error(`run ${runId}: publish answered ${answer.slice(0, 300)}`);
      log.publishedTo.push(...(answer.match(/[\w.+-]+@[\w.-]+\.example/g) ?? []));

      lap("runs: solve and publish");
      // Saturday morning: the trainers log the week's sessions.
      stack.setClock(`${addDays(monday, 5)}T08:00:00.000Z`);
      // The trainers work side by side; each session's draws come from its own seeded source, so the season is
      // the same whatever order the answers arrive in.
      const weekOf = await Promise.all(
        trainers.map(async (t) => {
          const dayPage = await t.person.page(`/train?day=${monday}`);
          return [...new Set([...dayPage.matchAll(/href="\/train\/sessions\/(\d+)"/g)].map((m) => Number(m[1])))];
        }),
      );
      // A severe event week: it happens to the first trainer (taking turns week by week) who has sessions.
      const turn = (i: number) => (i + week) % trainers.length;
      const severeTrainer = (SEASON.severeEventWeeks as readonly number[]).includes(week)
        ? trainers.map((_, i) => turn(i)).find((i) => weekOf[i].length > 0)
        : undefined;
      await Promise.all(
        trainers.map(async (t, ti) => {
          let severeDue = ti === severeTrainer;
          for (const id of weekOf[ti]) {
            const html = await t.person.page(`/train/sessions/${id}`);
            const start = inputValue(html, "start");
            const end = inputValue(html, "end");
            if (!html.includes('name="taskScore"') || !start || !end) continue; // logged, cancelled or paused
            if (start.slice(0, 10) > addDays(monday, 6)) continue; // next week's
            const s = await k("training_sessions").where({ id }).first("worker_id", "device_type_id");
            const draw = mulberry32(SEASON.seed + id * 7919);
            if (draw() < SEASON.noShowRate) {
              const reason = (["ill", "work", "unknown"] as const)[Math.floor(draw() * 3)];
              const r = await t.person.post(`/train/sessions/${id}.data`, {
                intent: "no_show",
                reason,
                reasonNote: "",
              });
              const said = await r.text();
              if (!said.includes("No-show recorded")) throw new Error(`no-show ${id}: ${said.slice(0, 300)}`);
              log.noShows++;
              continue;
            }
            const key = `${s.worker_id}:${s.device_type_id}`;
            const hours = practised.get(key) ?? 0;
            const c = curve(s.worker_id);
            const noise = 0.02 * normal(draw);
            const score = Math.min(1, Math.max(0, 0.97 - (0.97 - c.s0) * Math.exp(-c.c * hours) + noise));
            // Typed as on a phone with a decimal comma.
            const fields: Record<string, string> = { start, end, taskScore: score.toFixed(2).replace(".", ",") };
            const severe = severeDue;
            if (severe) {
              fields.ae_pain = "severe";
              fields.ae_pain_notes = "Sharp pain at the strap; session stopped.";
            }
            const res = await t.person.post(`/train/sessions/${id}.data`, fields);
            const text = await res.text();
            if (!text.includes("Session logged")) throw new Error(`log session ${id}: ${text.slice(0, 300)}`);
            log.sessionsLogged++;
            const dur = (Date.parse(`${end}:00Z`) - Date.parse(`${start}:00Z`)) / 3_600_000;
            practised.set(key, hours + dur);
            if (severe) {
              severeDue = false;
              const w = await k("workers").where({ id: s.worker_id }).first("employee_number");
              log.severe.push({
                workerId: s.worker_id,
                deviceTypeId: s.device_type_id,
                employeeNumber: w.employee_number,
              });
            }
          }
        }),
      );
      lap("trainers: open and log sessions");
      // The assessor reviews each course paused this week and resumes it.
      for (const p of log.severe.filter((x) => !log.resumed.some((r) => r.workerId === x.workerId))) {
        const reviewPath = `/assess/workers/${p.workerId}/courses/${p.deviceTypeId}`;
        await assessor.page(reviewPath);
        await assessor.post(reviewPath, {
          intent: "decide",
          decision: "resume",
          wearTimeLimitMinutes: "",
          conditions: "",
          clinicalNote: "Strap refitted and skin checked; no lasting injury. Resume with the usual limits.",
        });
        log.resumed.push({ workerId: p.workerId, deviceTypeId: p.deviceTypeId });
      }
      log.weekTimings.push(performance.now() - t0);
    }
    if (log.hires.length !== cohortSize()) throw new Error("not every intake ran");
    log.individualReads = reads.n;
    return log;
  } finally {
    await k.destroy();
  }
}

const visible = (html: string) =>
  html
    .replace(/<script[\s\S]*?<\/script>/g, "")
    .replace(/<[^>]+>/g, " ")
    .replace(/\s+/g, " ");

/** Starts an allocation run from the runs page's form and waits for it through the run's own status URL. */
async function startAndWait(coordinator: Person, fields: Record<string, string | string[]>): Promise<string> {
  const started = await coordinator.post("/coordinate/runs", fields, 302);
  const runPath = started.headers.get("Location")!;
  for (;;) {
    const st = (await (await coordinator.client.request(`${runPath}/status`)).json()) as {
      status: string;
      error: string | null;
    };
    if (st.status === "done") return runPath;
    if (st.status === "failed") throw new Error(`${runPath} failed: ${st.error}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

/** The first assessor fits and saves a new model version; the second approves it (two-person rule). */
async function fitAndApprove(k: SeasonDb, fitter: Person, approver: Person): Promise<number> {
  const device = await k("device_types").where({ code: SEASON.modelDevice }).first("id");
  const current = await k("model_versions")
    .where({ device_type_id: device.id, status: "approved" })
    .orderBy("id", "desc")
    .first("id", "norm_set_id", "measure_ids");
  const measureIds = JSON.parse(current.measure_ids) as number[];
  await fitter.post(
    "/models/new",
    {
      intent: "save",
      deviceTypeId: String(device.id),
      measureIds: measureIds.map(String),
      normSetId: String(current.norm_set_id),
      notes: "Refit with the autumn cohort.",
    },
    302,
  );
  const v = await k("model_versions").where({ device_type_id: device.id }).orderBy("id", "desc").first("id", "status");
  await approver.page(`/models/${v.id}`);
  await approver.post(`/models/${v.id}`, { intent: "approve", confirm: "yes" });
  const after = await k("model_versions").where({ id: v.id }).first("status");
  if (after.status !== "approved") throw new Error(`model version ${v.id} is ${after.status} after approval`);
  return v.id;
}
