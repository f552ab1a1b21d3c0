import { nowInstant } from "~/dates";
import { db } from "~/db.server";
import { conflict, notFound } from "~/errors";

/** Adds a site; without a zone it takes the organisation's default zone. */
export async function createSite(v: { code: string; name: string; timeZone?: string }): Promise<number> {
  return db().transaction(async (trx) => {
    if (await trx("sites").where({ code: v.code }).first("id"))
      throw conflict(`Site code ${v.code} is already used.`, "code");
    const org = await trx("organisations").orderBy("id").first("id", "time_zone");
    if (!org) throw new Error("No organisation is set up.");
    const [r] = await trx("sites")
      .insert({
        organisation_id: org.id,
        code: v.code,
        name: v.name,
        time_zone: v.timeZone ?? org.time_zone,
        created_at: nowInstant(),
      })
      .returning("id");
    return r.id;
  });
}

/** Sets a site's time zone; false when there is no such site. */
export async function setSiteTimeZone(siteId: number, timeZone: string): Promise<boolean> {
  return Number(await db()("sites").where({ id: siteId }).update({ time_zone: timeZone })) === 1;
}

/** Sets the organisation's default zone (for new sites; existing sites keep theirs). */
export async function setOrganisationTimeZone(timeZone: string): Promise<void> {
  await db()("organisations").update({ time_zone: timeZone });
}

export async function createDepartment(v: { siteId: number; code: string; name: string }): Promise<number> {
  return db().transaction(async (trx) => {
    if (!(await trx("sites").where({ id: v.siteId }).first("id")))
      throw notFound("That site does not exist.", "siteId");
    if (await trx("departments").where({ site_id: v.siteId, code: v.code }).first("id"))
      throw conflict(`Department code ${v.code} is already used at this site.`, "code");
    const [r] = await trx("departments")
      .insert({ site_id: v.siteId, code: v.code, name: v.name, created_at: nowInstant() })
      .returning("id");
    return r.id;
  });
}

export async function departmentHeadcounts(): Promise<Record<number, number>> {
  const rows = await db()("workers")
    .select("department_id")
    .count<{ department_id: number; n: number }[]>({ n: "*" })
    .groupBy("department_id");
  return Object.fromEntries(rows.map((r) => [r.department_id, Number(r.n)]));
}
