// Shared by worker.spec.ts and trainer.spec.ts: direct reads of the e2e database, and the worker
// accounts that seeds/07_portals_demo.ts gives two of Ines Calloway's trainees (invented people).
import AxeBuilder from "@axe-core/playwright";
import type { Page } from "@playwright/test";
import knex from "knex";
import type { TestDb } from "../integration/helpers";
import { persona } from "./fixtures";

let k: TestDb | null = null;
export function sql(databaseUrl: string): TestDb {
  if (!k)
    k = knex({ client: "better-sqlite3", connection: { filename: databaseUrl }, useNullAsDefault: true }) as TestDb;
  return k;
}
export async function closeSql(): Promise<void> {
  await k?.destroy();
  k = null;
}

export interface PortalAccount {
  id: number;
  employeeNumber: string;
  email: string;
  name: string;
  siteId: number;
  device: { id: number; code: string; name: string; wearTimeLimitMinutes: number };
}

/** The seed's accounts besides Amara Quist, by employee number: [0] has sessions logged, [1] withdraws consent. */
export async function portalAccount(db: TestDb, i: 0 | 1): Promise<PortalAccount> {
  const ines = await db("trainers as t")
    .join("users as u", "u.id", "t.user_id")
    .where("u.email", persona("trainer").email)
    .first("t.id");
  const rows = await db("workers as w")
    .join("users as u", "u.id", "w.user_id")
    .join("device_courses as c", "c.worker_id", "w.id")
    .join("device_types as d", "d.id", "c.device_type_id")
    .join("trainer_certifications as tc", function () {
      this.on("tc.device_type_id", "c.device_type_id").andOn("tc.trainer_id", db.raw("?", [ines.id]));
    })
    .whereNot("w.employee_number", "HV-00001")
    .whereIn("c.status", ["training", "paused"])
    .select(
      "w.id",
      "w.employee_number",
      "u.email",
      "w.given_name",
      "w.family_name",
      "w.site_id",
      "d.id as device_id",
      "d.code",
      "d.name",
      "d.wear_time_limit_minutes",
    )
    .orderBy(["w.employee_number", "d.id"]);
  const numbers = [...new Set(rows.map((r) => r.employee_number as string))];
  if (numbers.length < 2)
    throw new Error("seeds/07_portals_demo.ts should have made two worker accounts among Ines Calloway's trainees.");
  const r = rows.find((x) => x.employee_number === numbers[i])!;
  return {
    id: r.id,
    employeeNumber: r.employee_number,
    email: r.email,
    name: `${r.given_name} ${r.family_name}`,
    siteId: r.site_id,
    device: { id: r.device_id, code: r.code, name: r.name, wearTimeLimitMinutes: Number(r.wear_time_limit_minutes) },
  };
}

export async function inesTrainerId(db: TestDb): Promise<number> {
  return (
    await db("trainers as t")
      .join("users as u", "u.id", "t.user_id")
      .where("u.email", persona("trainer").email)
      .first("t.id")
  ).id;
}

/** Serious and critical axe-core findings (WCAG 2.1 A/AA and best practice) on the page as it is now. */
export async function seriousViolations(page: Page, label: string): Promise<string[]> {
  const result = await new AxeBuilder({ page })
    .withTags(["wcag2a", "wcag2aa", "wcag21a", "wcag21aa", "best-practice"])
    .analyze();
  return result.violations
    .filter((v) => v.impact === "serious" || v.impact === "critical")
    .map((v) => `${label} ${v.impact} ${v.id}: ${v.nodes.map((n) => n.target.join(" ")).join(", ")}`);
}
