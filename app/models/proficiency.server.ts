import type { ProficiencyCriterion } from "~/compute/proficiency-rule";
import { nowInstant } from "~/dates";
import { type Db, db } from "~/db.server";
import { notFound } from "~/errors";

// Proficiency criteria per device type, set by an assessor.
export interface CriterionRow extends ProficiencyCriterion {
  deviceTypeId: number;
  deviceTypeCode: string;
  deviceTypeName: string;
  setBy: string | null;
  setAt: string | null;
}

export async function listDeviceTypes(k: Db = db()): Promise<{ id: number; code: string; name: string }[]> {
  return (await k("device_types").select("id", "code", "name").orderBy("id")).map((r) => ({
    id: r.id,
    code: r.code,
    name: r.name,
  }));
}

/** Every device type with its criterion (null fields when none is set yet). */
export async function listCriteria(k: Db = db()): Promise<
  (Omit<CriterionRow, "scoreThreshold" | "consecutiveSessions"> & {
    scoreThreshold: number | null;
    consecutiveSessions: number | null;
  })[]
> {
  const rows = await k("device_types as d")
    .leftJoin("proficiency_criteria as c", "c.device_type_id", "d.id")
    .leftJoin("users as u", "u.id", "c.set_by")
    .select("d.id", "d.code", "d.name", "c.score_threshold", "c.consecutive_sessions", "c.set_at", "u.display_name")
    .orderBy("d.id");
  return rows.map((r) => ({
    deviceTypeId: r.id,
    deviceTypeCode: r.code,
    deviceTypeName: r.name,
    scoreThreshold: r.score_threshold ?? null,
    consecutiveSessions: r.consecutive_sessions ?? null,
    setBy: r.display_name ?? null,
    setAt: r.set_at ? String(r.set_at) : null,
  }));
}

export async function getCriterion(deviceTypeId: number, k: Db = db()): Promise<ProficiencyCriterion | null> {
  const r = await k("proficiency_criteria").where({ device_type_id: deviceTypeId }).first();
  return r ? { scoreThreshold: Number(r.score_threshold), consecutiveSessions: Number(r.consecutive_sessions) } : null;
}

export async function setCriterion(
  input: { deviceTypeId: number } & ProficiencyCriterion,
  userId: number,
): Promise<void> {
  await db().transaction(async (trx) => {
    if (!(await trx("device_types").where({ id: input.deviceTypeId }).first("id")))
      throw notFound("That device type does not exist.");
    const row = {
      score_threshold: input.scoreThreshold,
      consecutive_sessions: input.consecutiveSessions,
      set_by: userId,
      set_at: nowInstant(),
    };
    const existing = await trx("proficiency_criteria")
      .where({ device_type_id: input.deviceTypeId })
      .first("device_type_id");
    if (existing) await trx("proficiency_criteria").where({ device_type_id: input.deviceTypeId }).update(row);
    else await trx("proficiency_criteria").insert({ device_type_id: input.deviceTypeId, ...row });
  });
}
