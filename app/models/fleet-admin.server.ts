import type { Principal } from "~/auth/guard.server";
import type { Scope } from "~/auth/scope";
import { nowInstant } from "~/dates";
import { db, type TableRow } from "~/db.server";
import { notFound } from "~/errors";

// Fleet administration for coordinators: device types with fit rules and wear-time limits,
// units with status and bookable hours, maintenance windows. Units are limited to the coordinator's sites.

const unitSites = (scope: Scope) => (scope.allSites ? null : scope.siteIds.length ? scope.siteIds : [-1]);

export async function fleetAdminView(scope: Scope) {
  const types = await db()("device_types")
    .select(
      "id",
      "code",
      "name",
      "category",
      "description",
      "fit_rules",
      "wear_time_limit_minutes",
      "default_max_hours_per_week",
      "min_session_minutes",
      "max_session_minutes",
    )
    .orderBy("name");
  const uq = db()("device_units as u")
    .join("sites as s", "s.id", "u.site_id")
    .select(
      "u.id",
      "u.device_type_id",
      "u.serial",
      "u.status",
      "u.bookable_hours_per_week",
      "u.site_id",
      "s.name as site",
    )
    .orderBy("u.serial");
  const sites = unitSites(scope);
  if (sites) uq.whereIn("u.site_id", sites);
  const units = await uq;
  const windows = await db()("unit_maintenance_windows")
    .whereIn("device_unit_id", units.map((u) => u.id as number).concat(-1))
    .select("id", "device_unit_id", "starts_on", "ends_on", "reason")
    .orderBy("starts_on");
  return types.map((t) => {
    const mine = units.filter((u) => u.device_type_id === t.id);
    return {
      id: t.id,
      code: t.code,
      name: t.name,
      category: t.category,
      description: t.description ?? "",
      fitRules: t.fit_rules ?? "",
      wearTimeLimitMinutes: Number(t.wear_time_limit_minutes),
      defaultMaxHoursPerWeek: Number(t.default_max_hours_per_week),
      minSessionMinutes: Number(t.min_session_minutes),
      maxSessionMinutes: Number(t.max_session_minutes),
      bookableHoursPerWeek: mine
        .filter((u) => u.status === "in_service")
        .reduce((s, u) => s + Number(u.bookable_hours_per_week), 0),
      units: mine.map((u) => ({
        id: u.id as number,
        serial: u.serial as string,
        site: u.site as string,
        status: u.status as "in_service" | "maintenance" | "retired",
        bookableHoursPerWeek: Number(u.bookable_hours_per_week),
        maintenance: windows
          .filter((w) => w.device_unit_id === u.id)
          .map((w) => ({
            id: w.id,
            startsOn: w.starts_on,
            endsOn: w.ends_on,
            reason: w.reason ?? "",
          })),
      })),
    };
  });
}

async function unitInScope(scope: Scope, unitId: number) {
  const u = await db()("device_units").where({ id: unitId }).first("id", "site_id");
  if (!u || (!scope.allSites && !scope.siteIds.includes(u.site_id))) throw notFound("No such unit at your sites.");
  return u;
}

export async function updateDeviceType(
  _p: Principal,
  id: number,
  v: {
    wearTimeLimitMinutes: number;
    defaultMaxHoursPerWeek: number;
    minSessionMinutes: number;
    maxSessionMinutes: number;
    fitRules: string | null;
  },
) {
  const n = await db()("device_types").where({ id }).update({
    wear_time_limit_minutes: v.wearTimeLimitMinutes,
    min_session_minutes: v.minSessionMinutes,
    max_session_minutes: v.maxSessionMinutes,
    default_max_hours_per_week: v.defaultMaxHoursPerWeek,
    fit_rules: v.fitRules,
  });
  if (!n) throw notFound("No such device type.");
}

export async function updateUnit(
  p: Principal,
  id: number,
  v: { status: TableRow<"device_units">["status"]; bookableHoursPerWeek: number },
) {
  await unitInScope(p.scope, id);
  await db()("device_units")
    .where({ id })
    .update({ status: v.status, bookable_hours_per_week: v.bookableHoursPerWeek });
}

export async function addMaintenance(
  p: Principal,
  unitId: number,
  v: { startsOn: string; endsOn: string; reason: string | null },
) {
  await unitInScope(p.scope, unitId);
  await db()("unit_maintenance_windows").insert({
    device_unit_id: unitId,
    starts_on: v.startsOn,
    ends_on: v.endsOn,
    reason: v.reason,
    created_by: p.kind === "user" ? p.user.id : null,
    created_at: nowInstant(),
  });
}

export async function removeMaintenance(p: Principal, windowId: number) {
  const w = await db()("unit_maintenance_windows").where({ id: windowId }).first("device_unit_id");
  if (!w) throw notFound("No such maintenance window.");
  await unitInScope(p.scope, w.device_unit_id);
  await db()("unit_maintenance_windows").where({ id: windowId }).del();
}

/** Device types and sites for the run form's what-if choices. */
export async function planningChoices(scope: Scope) {
  const sites = await db()("sites").select("id", "name").orderBy("id");
  const departments = await db()("departments as d")
    .join("sites as s", "s.id", "d.site_id")
    .select("d.id", "d.name", "d.site_id", "s.name as site")
    .orderBy(["d.site_id", "d.name"]);
  const types = await db()("device_types").select("id", "name").orderBy("name");
  const tq = db()("trainers as t")
    .join("users as u", "u.id", "t.user_id")
    .join("sites as s", "s.id", "t.site_id")
    .select("t.id", "u.display_name", "s.name as site", "t.site_id")
    .orderBy("u.display_name");
  if (!scope.allSites) tq.whereIn("t.site_id", scope.siteIds.length ? scope.siteIds : [-1]);
  const inScope = (siteId: number) => scope.allSites || scope.siteIds.includes(siteId);
  return {
    sites: sites.filter((s) => inScope(s.id)).map((s) => ({ id: s.id, name: s.name })),
    departments: departments
      .filter((d) => inScope(d.site_id))
      .map((d) => ({ id: d.id as number, name: `${d.site} · ${d.name}` })),
    deviceTypes: types.map((t) => ({ id: t.id, name: t.name })),
    trainers: (await tq).map((t) => ({ id: t.id as number, name: `${t.display_name} (${t.site})` })),
  };
}

/** Names of trainers, device types and sites by id (for describing run parameters). */
export async function nameMaps() {
  return {
    trainers: new Map(
      (await db()("trainers as t").join("users as u", "u.id", "t.user_id").select("t.id", "u.display_name")).map(
        (t) => [t.id as number, t.display_name as string],
      ),
    ),
    devices: new Map((await db()("device_types").select("id", "name")).map((d) => [d.id, d.name])),
    sites: new Map((await db()("sites").select("id", "name")).map((s) => [s.id, s.name])),
  };
}
