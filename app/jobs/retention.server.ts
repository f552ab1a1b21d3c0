import type { Knex } from "knex";
import { addDays } from "~/dates";
import { db } from "~/db.server";

// Retention (docs/consent-and-disclosure.md): assessments — with their results and uploaded traces — older than the
// organisation's retention period are deleted. Runs as `npm run jobs:retention` (schedule it daily).
export interface PurgeSummary {
  cutoff: string;
  assessmentSessions: number;
  traceUploads: number;
  results: number;
}

export function retentionCutoff(today: string, retentionDays: number): string {
  return addDays(today, -retentionDays);
}

export async function purgeExpiredAssessments(today: string, k: Knex = db()): Promise<PurgeSummary> {
  return k.transaction(async (trx) => {
    const org = await trx("organisations").first("retention_days");
    const cutoff = retentionCutoff(today, Number(org?.retention_days ?? 3650));
    const ids: number[] = await trx("assessment_sessions").where("assessed_on", "<", cutoff).pluck("id");
    if (ids.length === 0) return { cutoff, assessmentSessions: 0, traceUploads: 0, results: 0 };
    let results = 0;
    let traceUploads = 0;
    for (let i = 0; i < ids.length; i += 500) {
      const chunk = ids.slice(i, i + 500);
      results += await trx("assessment_results").whereIn("session_id", chunk).del();
      traceUploads += await trx("trace_uploads").whereIn("session_id", chunk).del();
      await trx("assessment_sessions").whereIn("id", chunk).del();
    }
    return { cutoff, assessmentSessions: ids.length, traceUploads, results };
  });
}
