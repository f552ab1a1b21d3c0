import type { Scope } from "~/auth/scope";
import { db } from "~/db.server";

// Device types with units in service and bookable hours at the sites in scope.
export async function fleetSummary(scope: Scope) {
  const q = db()("device_types as t")
    .leftJoin("device_units as u", "u.device_type_id", "t.id")
    .select("t.id", "t.code", "t.name", "t.wear_time_limit_minutes", "t.default_max_hours_per_week")
    .select(db().raw("sum(case when u.status = 'in_service' then 1 else 0 end) as in_service"))
    .select(db().raw("sum(case when u.status = 'maintenance' then 1 else 0 end) as in_maintenance"))
    .select(
      db().raw("sum(case when u.status = 'in_service' then u.bookable_hours_per_week else 0 end) as bookable_hours"),
    )
    .groupBy("t.id", "t.code", "t.name", "t.wear_time_limit_minutes", "t.default_max_hours_per_week")
    .orderBy("t.name");
  if (!scope.allSites)
    q.where((w) => w.whereIn("u.site_id", scope.siteIds.length ? scope.siteIds : [-1]).orWhereNull("u.id"));
  const rows = await q;
  return rows.map((r) => ({
    id: r.id as number,
    code: r.code as string,
    name: r.name as string,
    wearTimeLimitMinutes: Number(r.wear_time_limit_minutes),
    defaultMaxHoursPerWeek: Number(r.default_max_hours_per_week),
    inService: Number(r.in_service ?? 0),
    inMaintenance: Number(r.in_maintenance ?? 0),
    bookableHours: Number(r.bookable_hours ?? 0),
  }));
}

export async function trainersSummary(scope: Scope) {
  const q = db()("trainers as tr")
    .join("users as u", "u.id", "tr.user_id")
    .join("sites as s", "s.id", "tr.site_id")
    .select("tr.id", "u.display_name", "s.name as site", "tr.hours_per_week", "tr.trainees_per_session")
    .orderBy("u.display_name");
  if (!scope.allSites) q.whereIn("tr.site_id", scope.siteIds.length ? scope.siteIds : [-1]);
  const trainers = await q;
  const certs = await db()("trainer_certifications as c")
    .join("device_types as t", "t.id", "c.device_type_id")
    .select("c.trainer_id", "t.name");
  return trainers.map((t) => ({
    id: t.id as number,
    name: t.display_name as string,
    site: t.site as string,
    hoursPerWeek: Number(t.hours_per_week),
    traineesPerSession: Number(t.trainees_per_session),
    certifications: certs.filter((c) => c.trainer_id === t.id).map((c) => c.name as string),
  }));
}

export async function trainerProfileForUser(userId: number) {
  const t = await db()("trainers as tr")
    .join("sites as s", "s.id", "tr.site_id")
    .where("tr.user_id", userId)
    .first("tr.id", "s.name as site", "tr.hours_per_week", "tr.trainees_per_session");
  if (!t) return null;
  const certs = await db()("trainer_certifications as c")
    .join("device_types as d", "d.id", "c.device_type_id")
    .where("c.trainer_id", t.id)
    .select("d.name", "c.certified_on");
  return {
    site: t.site as string,
    hoursPerWeek: Number(t.hours_per_week),
    traineesPerSession: Number(t.trainees_per_session),
    certifications: certs.map((c) => ({ name: c.name as string, since: (c.certified_on as string | null) ?? "" })),
  };
}
