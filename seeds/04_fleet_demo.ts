import type { Knex } from "knex";
import type { TableInsert } from "../app/db.server";

// ─────────────────────────────────────────────────────────────────────────────────────────────
// INVENTED DEMO DATA for the allocator: fit rules and session lengths of the device types, the sites' working
// hours and closures (an invented holiday calendar and a winter shutdown), maintenance windows of a few units,
// every trainer's weekly working pattern, some leave, and a few workers' training priorities.
// Everything here is fictional ("Harrow & Vale Fabrication"). Deterministic: fixed dates and a
// fixed choice of people (by employee number), no randomness. Runs after 01–03.
// ─────────────────────────────────────────────────────────────────────────────────────────────

const NOW = "2026-11-30T09:00:00.000Z";

const FIT_RULES: Record<string, string> = {
  "SRF-FOOT":
    "Hand length 16–22 cm; full toe and ankle movement on the controlling foot; no open skin on the hand. Fit checked by a clinician.",
  "SRA-WAIST": "Waist 70–120 cm; stands for at least 2 h; no recent back or hip surgery. Belt fitted by a clinician.",
  "EXO-SHOULDER":
    "Torso length and arm cuffs adjusted on site; not with current shoulder injury. Fit checked by a clinician.",
  "EXO-BACK": "Hip belt 75–125 cm; not during pregnancy or with acute back pain. Fit checked by a clinician.",
};

export async function seed(knex: Knex): Promise<void> {
  await knex.transaction(async (trx) => {
    for (const [code, rules] of Object.entries(FIT_RULES))
      await trx("device_types").where({ code }).update({ fit_rules: rules });
    // Sessions of 30 minutes up to two hours, never over the device's wear-time limit.
    for (const d of await trx("device_types").select("id", "wear_time_limit_minutes"))
      await trx("device_types")
        .where({ id: d.id })
        .update({
          min_session_minutes: Math.min(30, Number(d.wear_time_limit_minutes)),
          max_session_minutes: Math.min(120, Number(d.wear_time_limit_minutes)),
        });

    // Working hours: North Yard Mon–Fri 07:00–17:00; Riverside Mon–Fri 07:00–14:30 (the trainers' afternoon
    // windows end early there); Eastgate Mon–Thu 07:00–16:00 and Fri 07:00–12:00. Closures: Christmas Day,
    // Boxing Day and New Year's Day everywhere, and Riverside's winter shutdown week (an invented calendar).
    const siteId = async (code: string) => (await trx("sites").where({ code }).first("id"))?.id as number | undefined;
    const hours: Record<string, [number[], string, string][]> = {
      NY: [[[1, 2, 3, 4, 5], "07:00", "17:00"]],
      RS: [[[1, 2, 3, 4, 5], "07:00", "14:30"]],
      EG: [
        [[1, 2, 3, 4], "07:00", "16:00"],
        [[5], "07:00", "12:00"],
      ],
    };
    for (const [code, spans] of Object.entries(hours)) {
      const id = await siteId(code);
      if (!id) continue;
      for (const [days, start_time, end_time] of spans)
        for (const weekday of days)
          await trx("site_working_hours").insert({ site_id: id, weekday, start_time, end_time });
      const closures = [
        { starts_on: "2026-12-25", ends_on: "2026-12-26", reason: "Christmas Day and Boxing Day (invented calendar)" },
        { starts_on: "2027-01-01", ends_on: "2027-01-01", reason: "New Year's Day (invented calendar)" },
        ...(code === "RS"
          ? [{ starts_on: "2026-12-28", ends_on: "2026-12-31", reason: "Winter shutdown week (invented)" }]
          : []),
      ];
      for (const c of closures)
        await trx("site_closures").insert({ site_id: id, ...c, source: "form", created_at: NOW });
    }

    // Maintenance windows: a shoulder exoskeleton at North Yard is serviced in the second week of December,
    // a back exoskeleton at Riverside over the turn of the year.
    const unit = async (serial: string) =>
      (await trx("device_units").where({ serial }).first("id"))?.id as number | undefined;
    const windows = [
      {
        serial: "EXO-SHOULDER-NY-01",
        starts_on: "2026-12-14",
        ends_on: "2026-12-18",
        reason: "Spring cassette replacement (invented)",
      },
      {
        serial: "EXO-BACK-RS-02",
        starts_on: "2026-12-28",
        ends_on: "2027-01-08",
        reason: "Annual inspection (invented)",
      },
    ];
    for (const w of windows) {
      const id = await unit(w.serial);
      if (id)
        await trx("unit_maintenance_windows").insert({
          device_unit_id: id,
          starts_on: w.starts_on,
          ends_on: w.ends_on,
          reason: w.reason,
          created_at: NOW,
        });
    }

    // Weekly working pattern: 30-hour trainers work Mon–Fri 08:00–12:00 and 13:00–15:00;
    // 20-hour trainers Mon–Thu 08:00–13:00.
    const trainers = await trx("trainers as t")
      .join("users as u", "u.id", "t.user_id")
      .select("t.id", "t.hours_per_week", "u.display_name")
      .orderBy("t.id");
    const pattern: TableInsert<"trainer_working_pattern">[] = [];
    for (const t of trainers) {
      if (Number(t.hours_per_week) <= 20) {
        for (const weekday of [1, 2, 3, 4])
          pattern.push({ trainer_id: t.id, weekday, start_time: "08:00", end_time: "13:00" });
      } else {
        for (const weekday of [1, 2, 3, 4, 5]) {
          pattern.push({ trainer_id: t.id, weekday, start_time: "08:00", end_time: "12:00" });
          pattern.push({ trainer_id: t.id, weekday, start_time: "13:00", end_time: "15:00" });
        }
      }
    }
    if (pattern.length) await trx("trainer_working_pattern").insert(pattern);
    const leaveFor = async (name: string, starts_on: string, ends_on: string, reason: string) => {
      const t = trainers.find((x) => x.display_name === name);
      if (t) await trx("trainer_leave").insert({ trainer_id: t.id, starts_on, ends_on, reason, created_at: NOW });
    };
    await leaveFor("Odile Farrant", "2026-12-21", "2027-01-01", "Annual leave (invented)");
    await leaveFor("Kofi Ansell", "2027-01-11", "2027-01-15", "Course (invented)");

    // A few workers who are waiting for training: priorities with reasons, and some leave.
    const waiting = await trx("workers as w")
      .whereExists((q) => q.select(trx.raw("1")).from("forecasts as f").whereRaw("f.worker_id = w.id"))
      .whereNotExists((q) => q.select(trx.raw("1")).from("device_courses as c").whereRaw("c.worker_id = w.id"))
      .select("w.id", "w.employee_number")
      .orderBy("w.employee_number")
      .limit(12);
    const priorities = [
      {
        i: 0,
        priority: 3,
        reason:
          "Returning from a shoulder injury; the exoskeleton is part of the agreed return-to-work plan (invented).",
      },
      { i: 3, priority: 2, reason: "Station moves to overhead assembly in January (invented)." },
      { i: 6, priority: 2, reason: "Covers two lines; readiness unblocks the Kitting rota (invented)." },
    ];
    for (const p of priorities) {
      const w = waiting[p.i];
      if (w)
        await trx("worker_training_fields").insert({
          worker_id: w.id,
          priority: p.priority,
          priority_reason: p.reason,
          max_hours_per_week: null,
          updated_at: NOW,
        });
    }
    const w9 = waiting[9];
    if (w9)
      await trx("worker_training_fields").insert({
        worker_id: w9.id,
        priority: 1,
        priority_reason: null,
        max_hours_per_week: 2,
        updated_at: NOW,
      });
    const leave = [
      { i: 1, starts_on: "2026-12-21", ends_on: "2027-01-01", reason: "Annual leave (invented)" },
      { i: 4, starts_on: "2026-12-07", ends_on: "2026-12-11", reason: "Annual leave (invented)" },
    ];
    for (const l of leave) {
      const w = waiting[l.i];
      if (w)
        await trx("worker_leave").insert({
          worker_id: w.id,
          starts_on: l.starts_on,
          ends_on: l.ends_on,
          reason: l.reason,
          created_at: NOW,
        });
    }
  });
}
