import { describe, expect, inject, it } from "vitest";
import { readOutbox } from "../../scripts/smtp-catcher";
import {
  type Browserless,
  PERSONA,
  runFinished,
  type ScheduledSessionRow,
  scheduledSessionsOfRun,
  signIn,
  testDb,
} from "./helpers";

// Re-planning from the published plan through the app's routes: publish a run, give one trainer a day of leave
// (the trainer page's form), start a run "from the published plan", publish it. Checked from the database: the
// people who must move are exactly those with a session of that trainer on that day (counted here), everyone
// who keeps their sessions has them unchanged, nobody is double booked, and only people whose sessions
// changed are e-mailed.

const k = () => testDb();
// a start of its own, so the plan it publishes does not stand in for the one other files publish from 2026-12-07
const RUN = { startDate: "2027-01-04", horizonWeeks: "6", fairnessShare: "20" };

async function startRun(client: Browserless, fields: Record<string, string>): Promise<number> {
  const res = await client.postForm("/coordinate/runs", fields);
  expect(res.status, await res.clone().text()).toBe(302);
  return Number(/\/coordinate\/runs\/(\d+)$/.exec(res.headers.get("Location") ?? "")![1]);
}

const waitDone = async (client: Browserless, id: number) => (await runFinished(client, id)).status;

async function publish(client: Browserless, id: number): Promise<void> {
  const html = await (await client.request(`/coordinate/runs/${id}`)).text();
  const version = /name="expectedPlanVersion" value="(\d+)"/.exec(html)![1];
  const res = await client.postForm(`/coordinate/runs/${id}`, {
    intent: "publish",
    expectedPlanVersion: version,
    confirm: "yes",
  });
  expect(
    res.status,
    (await res.clone().text())
      .replace(/<[^>]+>/g, " ")
      .match(/.{0,300}(refus|break|minimum|closure|cannot)[\s\S]{0,300}/i)?.[0],
  ).toBe(200);
}

type Row = ScheduledSessionRow;
const sessionsOf = scheduledSessionsOfRun;
const fingerprint = (rows: Row[], workerId: number) =>
  rows
    .filter((r) => r.worker_id === workerId)
    .map((r) => `${r.scheduled_start}|${r.scheduled_end}|${r.trainer_id}|${r.device_unit_id}|${r.device_type_id}`)
    .sort()
    .join("\n");

describe("re-planning from the published plan", () => {
  it("after one trainer's day of leave moves only the people who had a session then; only they are e-mailed", async () => {
    const { client } = await signIn(PERSONA.coordinator);
    const base = await startRun(client, { ...RUN, label: "it-replan-base" });
    expect(await waitDone(client, base)).toBe("done");
    await publish(client, base);
    const before = await sessionsOf(base);
    expect(before.length).toBeGreaterThan(0);
    const inTraining = new Set(
      (await k()("device_courses").where({ status: "training" }).select("worker_id")).map((r) => r.worker_id as number),
    );
    const plannedBefore = before.filter((r) => !inTraining.has(r.worker_id));
    // the trainer and day with the most sessions of people not yet in training
    const count = new Map<string, number>();
    for (const r of plannedBefore) {
      const key = `${r.trainer_id}|${r.scheduled_start.slice(0, 10)}`;
      count.set(key, (count.get(key) ?? 0) + 1);
    }
    const [busiest] = [...count.entries()].sort((a, b) => b[1] - a[1] || a[0].localeCompare(b[0]));
    const [trainerText, day] = busiest[0].split("|");
    const trainerId = Number(trainerText);
    // brute force: who had a session with that trainer on that day
    const mustMove = new Set(
      plannedBefore
        .filter((r) => r.trainer_id === trainerId && r.scheduled_start.startsWith(day))
        .map((r) => r.worker_id),
    );
    expect(mustMove.size).toBeGreaterThan(0);

    const leave = await client.postForm(`/coordinate/trainers/${trainerId}`, {
      intent: "add-leave",
      startsOn: day,
      endsOn: day,
    });
    expect(leave.status).toBeLessThan(400);
    try {
      const replan = await startRun(client, {
        ...RUN,
        label: "it-replan",
        fromPublished: "on",
        keepWeight: "100",
      });
      expect(await waitDone(client, replan)).toBe("done");
      const stored = JSON.parse(
        (await k()("allocation_runs").where({ id: replan }).first("problem", "result")).problem,
      );
      const decidedAll = stored.replan.mustMove.map((m: { workerId: string }) => Number(m.workerId)) as number[];
      const decided = new Set(decidedAll.filter((id) => !inTraining.has(id)));
      expect(decided).toEqual(mustMove);
      // workers in training with a session of that trainer on that day move too
      for (const r of before)
        if (inTraining.has(r.worker_id) && r.trainer_id === trainerId && r.scheduled_start.startsWith(day))
          expect(decidedAll).toContain(r.worker_id);
      const page = await (await client.request(`/coordinate/runs/${replan}`)).text();
      expect(page).toContain("Changes to the published plan");
      expect(page).toContain("is on leave or not working at that time on");

      const result = JSON.parse((await k()("allocation_runs").where({ id: replan }).first("result")).result);
      const kept = new Set<number>((result.kept ?? []).map(Number));
      expect(kept.size).toBeGreaterThan(0);
      for (const id of mustMove) expect(kept.has(id)).toBe(false);

      const mailBefore = readOutbox(inject("outboxDir")).length;
      await publish(client, replan);
      const after = await sessionsOf(replan);
      // kept people: the very same sessions
      for (const id of kept) expect(fingerprint(after, id), `worker ${id}`).toBe(fingerprint(before, id));
      // the trainer's leave day is free now, and nobody (person, trainer, unit) is in two places at once
      expect(after.some((r) => r.trainer_id === trainerId && r.scheduled_start.startsWith(day))).toBe(false);
      for (let i = 0; i < after.length; i++)
        for (let j = i + 1; j < after.length; j++) {
          const a = after[i];
          const b = after[j];
          if (!(a.scheduled_start < b.scheduled_end && b.scheduled_start < a.scheduled_end)) continue;
          expect(a.worker_id === b.worker_id, `worker ${a.worker_id} at ${a.scheduled_start}`).toBe(false);
          expect(a.device_unit_id === b.device_unit_id, `unit ${a.device_unit_id} at ${a.scheduled_start}`).toBe(false);
          // a trainer's group slot: trainees start together on one device type (and may end at different times)
          if (a.trainer_id === b.trainer_id)
            expect(`${a.scheduled_start}|${a.device_type_id}`).toBe(`${b.scheduled_start}|${b.device_type_id}`);
        }
      // e-mail: none of the people who kept their sessions; every worker e-mailed had a change
      await new Promise((r) => setTimeout(r, 300));
      const emails = new Map(
        (await k()("workers").select("id", "email")).map((w) => [w.email as string, w.id as number]),
      );
      const mailedWorkers = readOutbox(inject("outboxDir"))
        .slice(mailBefore)
        .flatMap((m) => m.to)
        .flatMap((to) => (emails.has(to) ? [emails.get(to)!] : []));
      for (const id of mailedWorkers) {
        expect(kept.has(id), `worker ${id} kept their sessions but was e-mailed`).toBe(false);
        expect(fingerprint(after, id)).not.toBe(fingerprint(before, id));
      }
      const withEmail = new Set(emails.values());
      for (const id of mustMove) if (withEmail.has(id)) expect(mailedWorkers).toContain(id);
    } finally {
      await k()("trainer_leave").where({ trainer_id: trainerId, starts_on: day, ends_on: day }).del();
    }
  });
});

describe("re-planning with nothing changed", () => {
  it("keeps the sessions of workers already in training as they were and e-mails none of them", async () => {
    const { client } = await signIn(PERSONA.coordinator);
    const base = await startRun(client, { ...RUN, label: "it-replan-same-base" });
    expect(await waitDone(client, base)).toBe("done");
    await publish(client, base);
    const before = await sessionsOf(base);
    const inTraining = new Set(
      (await k()("device_courses").where({ status: "training" }).select("worker_id")).map((r) => r.worker_id as number),
    );
    const trainees = [...new Set(before.filter((r) => inTraining.has(r.worker_id)).map((r) => r.worker_id))];
    expect(trainees.length).toBeGreaterThan(0);

    const replan = await startRun(client, { ...RUN, label: "it-replan-same", fromPublished: "on", keepWeight: "100" });
    expect(await waitDone(client, replan)).toBe("done");
    const stored = JSON.parse((await k()("allocation_runs").where({ id: replan }).first("problem")).problem);
    const keptInTraining = new Set<number>(
      (stored.replan.committedKept ?? []).map((c: { workerId: string }) => Number(c.workerId)),
    );
    // nothing changed: every one of them whose published sessions cover their hours keeps them
    const moved = stored.replan.mustMove.filter((m: { workerId: string }) => trainees.includes(Number(m.workerId)));
    for (const m of moved) expect(m.reason).toMatch(/the published sessions give/);
    expect(keptInTraining.size).toBeGreaterThan(0);
    const page = await (await client.request(`/coordinate/runs/${replan}`)).text();
    expect(page).toContain("Changes to the published plan");
    // compared with the plan it started from, the value made ready is the people ready after placement, not
    // the solver's objective with the keep weight of everyone kept
    const summaryOf = async (id: number) =>
      JSON.parse((await k()("allocation_runs").where({ id }).first("summary")).summary) as { value: number };
    const compare = await (await client.request(`/coordinate/runs/compare?a=${base}&b=${replan}`)).text();
    const valueRow = /<tr data-differs="(yes|no)"><th scope="row">Value made ready[^<]*<\/th>(.*?)<\/tr>/.exec(compare);
    expect(valueRow).not.toBeNull();
    const [va, vb] = [(await summaryOf(base)).value, (await summaryOf(replan)).value];
    expect(valueRow![2]).toContain(`>${va.toFixed(1)}<`);
    expect(valueRow![2]).toContain(`>${vb.toFixed(1)}<`);
    const replanObjective = JSON.parse((await k()("allocation_runs").where({ id: replan }).first("result")).result)
      .objective as number;
    expect(replanObjective).toBeGreaterThan(vb); // the keep weight is in the objective only

    const mailBefore = readOutbox(inject("outboxDir")).length;
    await publish(client, replan);
    const after = await sessionsOf(replan);
    for (const id of keptInTraining) expect(fingerprint(after, id), `worker ${id}`).toBe(fingerprint(before, id));
    const emails = new Map(
      (await k()("workers").select("id", "email")).map((w) => [w.email as string, w.id as number]),
    );
    const mailedWorkers = readOutbox(inject("outboxDir"))
      .slice(mailBefore)
      .flatMap((m) => m.to)
      .flatMap((to) => (emails.has(to) ? [emails.get(to)!] : []));
    for (const id of keptInTraining) expect(mailedWorkers, `worker ${id} e-mailed`).not.toContain(id);
  });
});

describe("archiving runs and comparing them", () => {
  it("an archived run leaves the list until shown; the published plan's run cannot be archived", async () => {
    const { client } = await signIn(PERSONA.coordinator);
    const id = await startRun(client, { ...RUN, label: "it-archive" });
    expect(await waitDone(client, id)).toBe("done");
    const link = `href="/coordinate/runs/${id}"`;
    expect(await (await client.request("/coordinate/runs")).text()).toContain(link);
    const res = await client.postForm(`/coordinate/runs/${id}`, { intent: "archive", archived: "yes" });
    expect(res.status).toBe(200);
    expect(await res.text()).toContain("Archived: the runs list hides this run.");
    expect(await (await client.request("/coordinate/runs")).text()).not.toContain(link);
    const shown = await (await client.request("/coordinate/runs?archived=show")).text();
    expect(shown).toContain(link);
    expect(shown).toContain("· archived");
    expect((await client.postForm(`/coordinate/runs/${id}`, { intent: "archive", archived: "no" })).status).toBe(200);
    expect(await (await client.request("/coordinate/runs")).text()).toContain(link);

    const state = await k()("published_plan_state").where({ id: 1 }).first();
    const refused = await client.postForm(`/coordinate/runs/${state.current_run_id}`, {
      intent: "archive",
      archived: "yes",
    });
    expect(refused.status).toBe(409);
    expect(await refused.text()).toContain("This run is the published plan, so it stays in the list.");
    expect(
      (await k()("allocation_runs").where({ id: state.current_run_id }).first("archived_at")).archived_at,
    ).toBeNull();
  });

  it("the compare page marks only real differences, with a difference column", async () => {
    const { client } = await signIn(PERSONA.coordinator);
    const a = await startRun(client, { ...RUN, label: "it-compare-a" });
    const b = await startRun(client, { ...RUN, horizonWeeks: "3", label: "it-compare-b" });
    expect(await waitDone(client, a)).toBe("done");
    expect(await waitDone(client, b)).toBe("done");
    const same = await (await client.request(`/coordinate/runs/compare?a=${a}&b=${a}`)).text();
    expect(same).toContain(`Difference (#${a} − #${a})`);
    expect(same).not.toContain('data-differs="yes"');
    const html = await (await client.request(`/coordinate/runs/compare?a=${a}&b=${b}`)).text();
    const ready = async (id: number) => {
      const r = await k()("allocation_runs").where({ id }).first("result", "summary");
      return (r.summary ? JSON.parse(r.summary).ready : JSON.parse(r.result).assignments.length) as number;
    };
    const [ra, rb] = [await ready(a), await ready(b)];
    const row = /<tr data-differs="(yes|no)"><th scope="row">People ready<\/th>.*?<\/tr>/.exec(html);
    expect(row).not.toBeNull();
    expect(row![1]).toBe(ra === rb ? "no" : "yes");
    if (ra !== rb) expect(row![0]).toContain(`${rb > ra ? "+" : "−"}${Math.abs(rb - ra)}`);
    // plain words on screen; the exact terms only in the "how this was computed" panel
    const table = html.slice(html.indexOf('data-testid="run-compare"'), html.indexOf("How this was computed"));
    expect(table).not.toMatch(/objective|dual price|priority points/i);
  });
});
