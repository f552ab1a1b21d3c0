// `npm run jobs:retention`: delete assessments older than the organisation's retention period.
import { db } from "../app/db.server";
import { purgeExpiredAssessments } from "../app/jobs/retention.server";

const today = process.argv[2] ?? new Date().toISOString().slice(0, 10);
const summary = await purgeExpiredAssessments(today);
console.log(
  `retention purge (cut-off ${summary.cutoff}): ${summary.assessmentSessions} assessment sessions, ${summary.results} results, ${summary.traceUploads} trace uploads deleted`,
);
await db().destroy();
