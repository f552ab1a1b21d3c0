import { addMinutesToWallClock, dayOf, hhmmOfWallClock, nowDate, nowInstant, wallClock } from "~/dates";
import { db } from "~/db.server";
import type { SheetSpec } from "~/xlsx.server";
import { accessLogForWorker } from "./access-log.server";
import { type CalendarSession, icsFile } from "./calendar.server";
import { consentRecordsForExport } from "./consent.server";
import { mySessions, workerWithSite } from "./self-service.server";
import { workerTimeZone } from "./sites.server";

// "Download everything held about me" (docs/consent-and-disclosure.md): every row about one worker, by the worker id from
// the session. Each query below is filtered by that id; nothing here reads another worker's rows.

const iso = (v: unknown) => (v == null ? null : String(v));

export async function everythingAbout(workerId: number) {
  const k = db();
  const timeZone = await workerTimeZone(workerId, k);
  const w = await workerWithSite(workerId, k);
  if (!w) return null;
  const consent = await consentRecordsForExport(workerId, k);
  const assessments = await k("assessment_sessions as s")
    .leftJoin("users as u", "u.id", "s.assessor_user_id")
    .where("s.worker_id", workerId)
    .orderBy("s.assessed_on")
    .select("s.id", "s.assessed_on", "s.notes", "u.display_name as assessor");
  const sessionIds = assessments.map((a) => a.id);
  const results = sessionIds.length
    ? await k("assessment_results as r")
        .join("measures as m", "m.id", "r.measure_id")
        .leftJoin("norm_sets as n", "n.id", "r.norm_set_id")
        .whereIn("r.session_id", sessionIds)
        .orderBy(["r.session_id", "m.code"])
        .select("r.session_id", "m.code", "m.name", "m.unit", "r.value", "r.z_score", "n.name as norm_set")
    : [];
  const traces = sessionIds.length
    ? await k("trace_uploads")
        .whereIn("session_id", sessionIds)
        .orderBy("id")
        .select(
          "session_id",
          "kind",
          "filename",
          "sha256",
          "row_count",
          "sample_rate_hz",
          "resampled_rate_hz",
          "filter",
          "cutoff_hz",
          "duration_seconds",
          "computed",
          "created_at",
        )
    : [];
  const forecasts = await k("forecasts as f")
    .join("device_types as d", "d.id", "f.device_type_id")
    .join("model_versions as v", "v.id", "f.model_version_id")
    .where("f.worker_id", workerId)
    .orderBy("d.id")
    .select(
      "d.name as device_type",
      "v.version_number",
      "f.median_hours",
      "f.lower_hours",
      "f.upper_hours",
      "f.interval_level",
      "f.planning_hours",
      "f.hours_done",
      "f.remaining_hours",
      "f.remaining_lower",
      "f.remaining_upper",
      "f.progress_status",
      "f.explanation",
      "f.computed_at",
    );
  const courses = await k("device_courses as c")
    .join("device_types as d", "d.id", "c.device_type_id")
    .where("c.worker_id", workerId)
    .orderBy("d.id")
    .select(
      "d.name as device_type",
      "c.status",
      "c.cumulative_hours",
      "c.started_on",
      "c.proficient_on",
      "c.hours_to_proficiency",
      "c.pause_reason",
      "c.updated_at",
    );
  const sessions = await k("training_sessions as ts")
    .join("device_types as d", "d.id", "ts.device_type_id")
    .leftJoin("device_units as u", "u.id", "ts.device_unit_id")
    .leftJoin("trainers as tr", "tr.id", "ts.trainer_id")
    .leftJoin("users as tu", "tu.id", "tr.user_id")
    .where("ts.worker_id", workerId)
    .orderBy([{ column: "ts.scheduled_start" }, { column: "ts.id" }])
    .select(
      "ts.id",
      "d.name as device_type",
      "u.serial as unit",
      "tu.display_name as trainer",
      "ts.scheduled_start",
      "ts.scheduled_end",
      "ts.status",
      "ts.duration_hours",
      "ts.task_score",
      "ts.cumulative_hours",
      "ts.notes",
      "ts.logged_at",
    );
  const events = await k("adverse_events")
    .where({ worker_id: workerId })
    .orderBy("id")
    .select("session_id", "kind", "severity", "notes", "at");
  const stages = await k("stage_changes as s")
    .leftJoin("device_types as d", "d.id", "s.device_type_id")
    .leftJoin("users as u", "u.id", "s.actor_user_id")
    .where("s.worker_id", workerId)
    .orderBy("s.id")
    .select("s.at", "s.from_stage", "s.to_stage", "d.name as device_type", "u.display_name as by");
  const reviews = await k("review_requests as r")
    .leftJoin("device_types as d", "d.id", "r.device_type_id")
    .leftJoin("users as u", "u.id", "r.answered_by")
    .where("r.worker_id", workerId)
    .orderBy("r.id")
    .select(
      "r.subject",
      "d.name as device_type",
      "r.message",
      "r.status",
      "r.answer",
      "u.display_name as answered_by",
      "r.created_at",
      "r.answered_at",
    );
  const outcomes = await k("forecast_outcomes as o")
    .join("device_types as d", "d.id", "o.device_type_id")
    .where("o.worker_id", workerId)
    .select(
      "d.name as device_type",
      "o.forecast_median_hours",
      "o.forecast_lower_hours",
      "o.forecast_upper_hours",
      "o.actual_hours",
      "o.reached_on",
    );
  const accessLog = await accessLogForWorker(workerId, 100_000);

  return {
    about:
      "Everything Limberly holds about you, as of the time below. Record times (given, logged, read) are UTC; session times are the site's wall-clock times.",
    generatedAt: nowInstant(),
    worker: {
      employeeNumber: w.employee_number,
      givenName: w.given_name,
      familyName: w.family_name,
      email: w.email ?? null,
      site: w.site,
      department: w.department,
      stage: w.stage,
      createdAt: iso(w.created_at),
      updatedAt: iso(w.updated_at),
    },
    consent: consent.map((c) => ({
      purpose: c.purpose,
      status: c.status,
      textVersion: c.version,
      givenAt: iso(c.given_at),
      withdrawnAt: iso(c.withdrawn_at),
      witness: c.witness ?? null,
      recordedBy: c.recorded_by ?? null,
    })),
    assessments: assessments.map((a) => ({
      assessedOn: a.assessed_on as string,
      assessor: a.assessor ?? null,
      notes: a.notes ?? null,
      results: results
        .filter((r) => r.session_id === a.id)
        .map((r) => ({
          measure: r.code,
          name: r.name,
          unit: r.unit,
          value: Number(r.value),
          zScore: r.z_score == null ? null : Number(r.z_score),
          normSet: r.norm_set ?? null,
        })),
      traces: traces
        .filter((t) => t.session_id === a.id)
        .map((t) => ({
          kind: t.kind,
          filename: t.filename,
          sha256: t.sha256,
          rows: t.row_count,
          sampleRateHz: t.sample_rate_hz,
          // how the trace was processed before its measures (sway traces; null for the others)
          processing:
            t.filter == null
              ? null
              : {
                  resampledRateHz: Number(t.resampled_rate_hz),
                  filter: t.filter,
                  cutoffHz: Number(t.cutoff_hz),
                  durationSeconds: Number(t.duration_seconds),
                },
          computed: JSON.parse(t.computed),
          uploadedAt: iso(t.created_at),
        })),
    })),
    forecasts: forecasts.map((f) => ({
      deviceType: f.device_type,
      modelVersion: f.version_number,
      medianHours: Number(f.median_hours),
      lowerHours: Number(f.lower_hours),
      upperHours: Number(f.upper_hours),
      intervalLevel: Number(f.interval_level),
      planningHours: Number(f.planning_hours),
      hoursDone: Number(f.hours_done),
      remainingHours: f.remaining_hours == null ? null : Number(f.remaining_hours),
      remainingLower: f.remaining_lower == null ? null : Number(f.remaining_lower),
      remainingUpper: f.remaining_upper == null ? null : Number(f.remaining_upper),
      progressStatus: f.progress_status ?? null,
      howComputed: JSON.parse(f.explanation),
      computedAt: iso(f.computed_at),
    })),
    forecastOutcomes: outcomes.map((o) => ({
      deviceType: o.device_type,
      forecastMedianHours: Number(o.forecast_median_hours),
      forecastLowerHours: Number(o.forecast_lower_hours),
      forecastUpperHours: Number(o.forecast_upper_hours),
      actualHours: Number(o.actual_hours),
      reachedOn: o.reached_on as string,
    })),
    courses: courses.map((c) => ({
      deviceType: c.device_type,
      status: c.status,
      cumulativeHours: Number(c.cumulative_hours),
      startedOn: iso(c.started_on),
      proficientOn: iso(c.proficient_on),
      hoursToProficiency: c.hours_to_proficiency == null ? null : Number(c.hours_to_proficiency),
      pauseReason: c.pause_reason ?? null,
    })),
    sessions: sessions.map((s) => ({
      deviceType: s.device_type,
      unit: s.unit ?? null,
      trainer: s.trainer ?? null,
      // Wall-clock times of the worker's site, in timeZone.
      scheduledStart: s.scheduled_start == null ? null : wallClock(s.scheduled_start),
      scheduledEnd: s.scheduled_end == null ? null : wallClock(s.scheduled_end),
      timeZone,
      status: s.status,
      durationHours: s.duration_hours == null ? null : Number(s.duration_hours),
      taskScore: s.task_score == null ? null : Number(s.task_score),
      cumulativeHours: s.cumulative_hours == null ? null : Number(s.cumulative_hours),
      notes: s.notes ?? null,
      loggedAt: iso(s.logged_at),
      adverseEvents: events
        .filter((e) => e.session_id === s.id)
        .map((e) => ({ kind: e.kind, severity: e.severity, notes: e.notes ?? null, at: iso(e.at) })),
    })),
    stageChanges: stages.map((s) => ({
      at: iso(s.at),
      from: s.from_stage ?? null,
      to: s.to_stage,
      deviceType: s.device_type ?? null,
      by: s.by ?? null,
    })),
    reviewRequests: reviews.map((r) => ({
      subject: r.subject,
      deviceType: r.device_type ?? null,
      message: r.message,
      status: r.status,
      answer: r.answer ?? null,
      answeredBy: r.answered_by ?? null,
      createdAt: iso(r.created_at),
      answeredAt: iso(r.answered_at),
    })),
    accessLog,
  };
}
export type EverythingAbout = NonNullable<Awaited<ReturnType<typeof everythingAbout>>>;

/** The same content as spreadsheet sheets (one per section). */
export function exportSheets(d: EverythingAbout): SheetSpec[] {
  const cols = (keys: string[]) => keys.map((k) => ({ header: k, key: k, width: Math.max(14, k.length + 4) }));
  const sheet = (name: string, rows: Record<string, unknown>[], note?: string): SheetSpec => {
    const keys = rows.length ? Object.keys(rows[0]) : ["(none)"];
    return {
      name,
      columns: cols(keys),
      rows: rows.map((r) =>
        Object.fromEntries(
          Object.entries(r).map(([k, v]) => [k, v != null && typeof v === "object" ? JSON.stringify(v) : v]),
        ),
      ),
      note,
    };
  };
  return [
    sheet("Me", [d.worker], `${d.about} Generated ${d.generatedAt}.`),
    sheet("Consent", d.consent),
    sheet(
      "Assessment results",
      d.assessments.flatMap((a) => a.results.map((r) => ({ assessedOn: a.assessedOn, assessor: a.assessor, ...r }))),
    ),
    sheet(
      "Traces",
      d.assessments.flatMap((a) => a.traces.map((t) => ({ assessedOn: a.assessedOn, ...t }))),
    ),
    sheet("Forecasts", d.forecasts),
    sheet("Courses", d.courses),
    sheet(
      "Sessions",
      d.sessions.map(({ adverseEvents, ...s }) => ({
        ...s,
        adverseEvents: adverseEvents.length ? adverseEvents.map((e) => `${e.kind} (${e.severity})`).join("; ") : "",
      })),
    ),
    sheet("Stage changes", d.stageChanges),
    sheet("Review requests", d.reviewRequests),
    sheet("Access log", d.accessLog),
  ];
}

/**
 * An iCalendar file of the worker's scheduled sessions (from a week ago on), written by the allocation area's
 * icsFile (calendar.server.ts) with the same UIDs as its publish e-mails, so a calendar keeps one event each.
 */
export async function myCalendar(workerId: number, now = nowDate()): Promise<string> {
  const sessions = await mySessions(workerId, { from: new Date(now.getTime() - 7 * 86_400_000) });
  const events: CalendarSession[] = sessions.map((s) => ({
    uid: `w${workerId}-${dayOf(s.start)}-${hhmmOfWallClock(s.start).replace(":", "")}-${s.deviceTypeId}@limberly`,
    date: dayOf(s.start),
    start: hhmmOfWallClock(s.start),
    end: hhmmOfWallClock(s.end ?? addMinutesToWallClock(s.start, 60)),
    timeZone: s.timeZone,
    title: `Device training: ${s.deviceType}`,
    description: [
      `Device: ${s.deviceType}${s.unit ? ` (unit ${s.unit})` : ""}.`,
      s.trainer ? `Trainer: ${s.trainer}.` : null,
      "Check skin and fatigue before and after; stop at once on pain or numbness and tell your trainer.",
    ]
      .filter(Boolean)
      .join(" "),
    location: s.place,
  }));
  if (events.length === 0) {
    return [
      "BEGIN:VCALENDAR",
      "VERSION:2.0",
      "PRODID:limberly/allocation",
      "CALSCALE:GREGORIAN",
      "METHOD:PUBLISH",
      "X-WR-CALNAME:My device training",
      "END:VCALENDAR",
      "",
    ].join("\r\n");
  }
  return icsFile(events, { calName: "My device training" });
}
