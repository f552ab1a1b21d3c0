import type { Knex } from "knex";
import type { TableInsert } from "../app/db.server";

// ─────────────────────────────────────────────────────────────────────────────────────────────
// INVENTED DEMO DATA for the worker and trainer portals. "Harrow & Vale Fabrication" and all its
// people are fictional. Deterministic: fixed dates, fixed people (by employee number), no
// randomness. Runs after 01–04.
//
// - Sign-in accounts (role worker; their roster e-mail is the identity) for the first two of Ines Calloway's
// trainees still in training at North Yard after seeds 01–04, by employee number, Amara Quist (HV-00001)
// left out, so that demo and tests can show a withdrawal and a logged session without touching her.
// - Scheduled sessions, Monday 30 November to Friday 18 December 2026, for Ines Calloway's trainees in
// training on the North Yard units (Amara Quist included), inside the devices' wear-time limits.
// - One answered and one open review request, so the assessors' queue and the worker page are not empty.
// ─────────────────────────────────────────────────────────────────────────────────────────────

const NOW = "2026-11-30T09:00:00.000Z";
const FIRST_MONDAY = "2026-11-30";
const WEEKS = 3;

function day(offset: number): string {
  const d = new Date(`${FIRST_MONDAY}T00:00:00.000Z`);
  d.setUTCDate(d.getUTCDate() + offset);
  return d.toISOString().slice(0, 10);
}

export async function seed(knex: Knex): Promise<void> {
  await knex.transaction(async (trx) => {
    const ines = await trx("trainers as t")
      .join("users as u", "u.id", "t.user_id")
      .where("u.email", "ines.calloway@harrowvale.example")
      .first("t.id", "t.site_id", "u.id as user_id");
    if (!ines) return;
    const morwenna = (await trx("users").where({ email: "morwenna.pike@harrowvale.example" }).first("id"))?.id ?? null;

    // Ines's trainees in training on devices she is certified for, at her site.
    const trainees = await trx("device_courses as c")
      .join("workers as w", "w.id", "c.worker_id")
      .join("trainer_certifications as tc", function () {
        this.on("tc.device_type_id", "c.device_type_id").andOn("tc.trainer_id", trx.raw("?", [ines.id]));
      })
      .where("c.status", "training")
      .where("w.site_id", ines.site_id)
      .select("c.worker_id", "c.device_type_id", "w.employee_number")
      .orderBy(["c.device_type_id", "w.employee_number"]);

    // Worker accounts for two of them (their roster e-mail becomes their sign-in identity).
    const accounts = [
      ...new Set(trainees.filter((t) => t.employee_number !== "HV-00001").map((t) => t.employee_number as string)),
    ]
      .sort()
      .slice(0, 2);
    for (const number of accounts) {
      const w = await trx("workers")
        .where({ employee_number: number })
        .first("id", "given_name", "family_name", "email", "site_id", "department_id", "user_id");
      if (!w || w.user_id || !w.email) continue;
      const [u] = await trx("users")
        .insert({ email: w.email, display_name: `${w.given_name} ${w.family_name}`, active: true, created_at: NOW })
        .returning("id");
      await trx("role_assignments").insert({
        user_id: u.id,
        role: "worker",
        site_id: w.site_id,
        department_id: w.department_id,
        created_at: NOW,
      });
      await trx("workers").where({ id: w.id }).update({ user_id: u.id });
    }
    const units = await trx("device_units")
      .where({ site_id: ines.site_id, status: "in_service" })
      .select("id", "device_type_id", "serial")
      .orderBy("serial");
    const devices = new Map(
      (await trx("device_types").select("id", "wear_time_limit_minutes")).map((d) => [
        d.id as number,
        Number(d.wear_time_limit_minutes),
      ]),
    );

    // Slots: each trainee twice a week (Mon/Wed or Tue/Thu), Ines's day 08:00–16:00 with a lunch break.
    const hours = [8, 9, 10, 11, 13, 14, 15];
    const rows: TableInsert<"training_sessions">[] = [];
    trainees.forEach((t, i) => {
      const unitsOfType = units.filter((u) => u.device_type_id === t.device_type_id);
      if (unitsOfType.length === 0) return;
      const minutes = Math.min(60, devices.get(t.device_type_id) ?? 60);
      const days = i % 2 === 0 ? [0, 2] : [1, 3];
      const hour = hours[Math.floor(i / 2) % hours.length];
      for (let wk = 0; wk < WEEKS; wk++) {
        for (const d of days) {
          const date = day(wk * 7 + d);
          // Wall-clock times, stored without zone.
          const start = `${date}T${String(hour).padStart(2, "0")}:00:00`;
          const end = new Date(new Date(`${start}Z`).getTime() + minutes * 60_000).toISOString().slice(0, 19);
          rows.push({
            worker_id: t.worker_id,
            device_type_id: t.device_type_id,
            trainer_id: ines.id,
            device_unit_id: unitsOfType[i % unitsOfType.length].id,
            allocation_run_id: null,
            scheduled_start: start,
            scheduled_end: end,
            status: "scheduled",
            created_at: NOW,
          });
        }
      }
    });
    for (let i = 0; i < rows.length; i += 100) await trx("training_sessions").insert(rows.slice(i, i + 100));

    // Review requests: one answered (Amara), one open (the second account).
    const amara = await trx("workers").where({ employee_number: "HV-00001" }).first("id", "user_id");
    const w99 = accounts[1]
      ? await trx("workers").where({ employee_number: accounts[1] }).first("id", "user_id")
      : null;
    const foot = await trx("device_types").where({ code: "SRF-FOOT" }).first("id");
    const arm = w99
      ? await trx("device_courses")
          .where({ worker_id: w99.id, status: "training" })
          .orderBy("device_type_id")
          .first("device_type_id as id")
      : null;
    if (amara && foot) {
      await trx("review_requests").insert({
        worker_id: amara.id,
        subject: "forecast",
        device_type_id: foot.id,
        status: "answered",
        requested_by: amara.user_id,
        message:
          "My forecast says about 20 hours on the finger, but my scores are already close to the goal. Could someone look at it?",
        answer:
          "Thank you for asking. The forecast now takes your logged sessions into account, so the remaining hours have come down. We will look again after two more sessions.",
        answered_by: morwenna,
        created_at: "2026-11-24T08:15:00.000Z",
        answered_at: "2026-11-25T14:00:00.000Z",
      });
    }
    if (w99 && arm) {
      await trx("review_requests").insert({
        worker_id: w99.id,
        subject: "plan",
        device_type_id: arm.id,
        status: "open",
        requested_by: w99.user_id,
        message: "My training sessions clash with the Tuesday stock count. Could they move to another day?",
        created_at: "2026-11-27T11:30:00.000Z",
      });
    }
  });
}
