import type { Knex } from "knex";
import type { Tables } from "knex/types/tables";
import type { Role } from "~/auth/permissions";
import type { TraceKind } from "~/compute/trace-parsing";
import type { ConsentPurpose } from "~/domain/consent-purposes";
import type { AuditEvent } from "~/domain/privilege-events";
import type { Stage } from "~/domain/stages";
import type { NoShowReason } from "~/schemas/session-log";

// The tables as Knex's type inference sees them, so `db()("workers").where(…).first("id", "stage")` is typed
// without casts. One entry per table, kept in step with migrations/ (a new column goes here in the same
// change). Values are the app's one value model on both engines (knexfile.ts): dates, instants and wall-clock
// times are strings, floats and doubles are numbers, JSON columns are text. Queries on an aliased table
// ("workers as w") or with computed columns are not inferred; their models map the rows to typed shapes.

/** A boolean column: 1/0 on SQLite, true/false on PostgreSQL. Read it with `Boolean(…)`. */
export type DbBoolean = boolean | number;

type NullableKeys<R> = { [K in keyof R]: null extends R[K] ? K : never }[keyof R];
type Writable<R> = { [K in keyof R]: R[K] | Knex.Raw };
/** An insert names every column without a default that may not be null; the rest may be left out. */
type Insert<R, D extends keyof R> = Writable<Omit<R, D | NullableKeys<R>> & Partial<Pick<R, D | NullableKeys<R>>>>;
/** A table's row, and which columns have a default (or are generated) so inserts may leave them out. */
type Table<R, D extends keyof R = never> = Knex.CompositeTableType<R, Insert<R, D>, Partial<Writable<R>>>;

/** A row of `table` as queries read it, e.g. `TableRow<"device_units">["status"]`. */
export type TableRow<T extends keyof Tables> = Knex.ResolveTableType<Tables[T]>;
/** What an insert into `table` takes, for rows built before the insert call. */
export type TableInsert<T extends keyof Tables> = Knex.ResolveTableType<Tables[T], "insert">;

declare module "knex/types/tables" {
  interface Tables {
    access_log: Table<
      {
        id: number;
        at: string;
        actor_user_id: number | null;
        actor_role: string | null;
        api_key_id: number | null;
        worker_id: number;
        resource: string;
        action: string;
        route: string | null;
        ip: string | null;
      },
      "id" | "action"
    >;
    adverse_events: Table<
      {
        id: number;
        session_id: number;
        worker_id: number;
        kind: "pain" | "numbness" | "skin" | "fatigue" | "other";
        severity: "mild" | "moderate" | "severe";
        notes: string | null;
        recorded_by: number | null;
        at: string;
      },
      "id"
    >;
    allocation_runs: Table<
      {
        id: number;
        label: string | null;
        base_run_id: number | null;
        parameters: string;
        status: "queued" | "running" | "done" | "failed";
        phase: string | null;
        fraction: number;
        problem: string | null;
        result: string | null;
        error: string | null;
        created_by: number | null;
        created_at: string;
        started_at: string | null;
        finished_at: string | null;
        version: number;
        published_at: string | null;
        published_by: number | null;
        published_plan_version: number | null;
        claimed_by: string | null;
        heartbeat_at: string | null;
        attempts: number;
        summary: string | null;
        archived_at: string | null;
      },
      "id" | "status" | "fraction" | "version" | "attempts"
    >;
    api_key_sites: Table<{
      api_key_id: number;
      site_id: number;
    }>;
    api_keys: Table<
      {
        id: number;
        name: string;
        prefix: string;
        secret_hash: string;
        role: Role;
        created_by: number | null;
        created_at: string;
        revoked_at: string | null;
        last_used_at: string | null;
        awaiting_approval: DbBoolean;
      },
      "id" | "awaiting_approval"
    >;
    assessment_results: Table<
      {
        id: number;
        session_id: number;
        measure_id: number;
        value: number;
        z_score: number | null;
        norm_set_id: number | null;
        trace_upload_id: number | null;
        created_at: string;
      },
      "id"
    >;
    assessment_sessions: Table<
      {
        id: number;
        worker_id: number;
        assessed_on: string;
        assessor_user_id: number | null;
        notes: string | null;
        created_at: string;
      },
      "id"
    >;
    consent_records: Table<
      {
        id: number;
        worker_id: number;
        purpose: ConsentPurpose;
        text_version_id: number;
        status: "given" | "withdrawn";
        given_at: string | null;
        withdrawn_at: string | null;
        witness_user_id: number | null;
        recorded_by: number | null;
        created_at: string;
      },
      "id"
    >;
    consent_text_versions: Table<
      {
        id: number;
        purpose: ConsentPurpose;
        version: string;
        body: string;
        effective_from: string;
        created_by: number | null;
        created_at: string;
      },
      "id"
    >;
    course_reviews: Table<
      {
        id: number;
        worker_id: number;
        device_type_id: number;
        decision: "resume" | "resume_with_conditions" | "stop" | "acknowledge";
        wear_time_limit_minutes: number | null;
        conditions: string | null;
        clinical_note: string;
        decided_by: number | null;
        decided_at: string;
      },
      "id"
    >;
    departments: Table<
      {
        id: number;
        site_id: number;
        code: string;
        name: string;
        created_at: string;
      },
      "id"
    >;
    device_courses: Table<
      {
        id: number;
        worker_id: number;
        device_type_id: number;
        status: "planned" | "training" | "proficient" | "paused" | "stopped";
        cumulative_hours: number;
        started_on: string | null;
        proficient_on: string | null;
        hours_to_proficiency: number | null;
        pause_reason: string | null;
        updated_at: string;
        /** Set by a course review; null: the device type's limit applies. */
        wear_time_limit_minutes: number | null;
      },
      "id" | "cumulative_hours"
    >;
    device_types: Table<
      {
        id: number;
        code: string;
        name: string;
        category: "supernumerary_finger" | "supernumerary_arm" | "exoskeleton";
        description: string | null;
        wear_time_limit_minutes: number;
        default_max_hours_per_week: number;
        created_at: string;
        fit_rules: string | null;
        min_session_minutes: number;
        max_session_minutes: number;
      },
      "id" | "wear_time_limit_minutes" | "default_max_hours_per_week" | "min_session_minutes" | "max_session_minutes"
    >;
    device_units: Table<
      {
        id: number;
        device_type_id: number;
        site_id: number;
        serial: string;
        status: "in_service" | "maintenance" | "retired";
        bookable_hours_per_week: number;
        created_at: string;
      },
      "id" | "status" | "bookable_hours_per_week"
    >;
    forecast_outcomes: Table<
      {
        id: number;
        model_version_id: number;
        worker_id: number;
        device_type_id: number;
        forecast_median_hours: number;
        forecast_lower_hours: number;
        forecast_upper_hours: number;
        actual_hours: number;
        covered: DbBoolean;
        reached_on: string;
        recorded_at: string;
        forecast_planning_hours: number | null;
        planning_quantile: number | null;
      },
      "id"
    >;
    forecasts: Table<
      {
        id: number;
        worker_id: number;
        device_type_id: number;
        model_version_id: number;
        median_hours: number;
        lower_hours: number;
        upper_hours: number;
        interval_level: number;
        planning_quantile: number;
        planning_hours: number;
        log_mean: number;
        log_scale: number;
        df: number;
        explanation: string;
        hours_done: number;
        progress_status: "combined" | "prior-only" | "review" | "proficient" | null;
        remaining_hours: number | null;
        remaining_lower: number | null;
        remaining_upper: number | null;
        remaining_planning_hours: number | null;
        progress: string | null;
        computed_at: string;
      },
      "id" | "interval_level" | "hours_done"
    >;
    measures: Table<
      {
        id: number;
        code: string;
        name: string;
        unit: string;
        higher_is_better: DbBoolean;
        entry: "manual" | "trace";
        trace_kind: TraceKind | null;
        description: string | null;
        active: DbBoolean;
        created_by: number | null;
        created_at: string;
      },
      "id" | "active"
    >;
    model_versions: Table<
      {
        id: number;
        device_type_id: number;
        version_number: number;
        measure_ids: string;
        measure_codes: string;
        cohort_size: number;
        excluded: string;
        coefficients: string;
        standard_errors: string;
        covariance: string;
        residual_sd: number;
        df_residual: number;
        ridge: number;
        standardisation: string;
        loocv_mae_hours: number;
        r_squared: number;
        loocv_coverage80: number;
        calibration: string;
        status: "draft" | "approved" | "retired";
        notes: string | null;
        fitted_by: number | null;
        fitted_at: string;
        approved_by: number | null;
        approved_at: string | null;
        retired_by: number | null;
        retired_at: string | null;
        norm_set_id: number | null;
        method: string;
        completed_courses: number | null;
        still_training_courses: number | null;
        stopped_courses: number | null;
        planning_quantile: number | null;
        loocv_planning_coverage: number | null;
        loocv_planning_coverage_se: number | null;
        loocv_coverage_stopped_as_miss: number | null;
        risk_groups: string | null;
      },
      "id" | "ridge" | "status" | "method"
    >;
    norm_sets: Table<
      {
        id: number;
        name: string;
        origin: "cohort" | "published";
        source: string;
        source_date: string;
        created_by: number | null;
        created_at: string;
      },
      "id"
    >;
    norm_values: Table<{
      norm_set_id: number;
      measure_id: number;
      mean: number;
      sd: number;
      n: number | null;
    }>;
    organisations: Table<
      {
        id: number;
        name: string;
        disclosure_threshold: number;
        retention_days: number;
        manager_groupings: string;
        created_at: string;
        planning_quantile: number;
        time_zone: string;
        max_hidden_share: number;
      },
      | "id"
      | "disclosure_threshold"
      | "retention_days"
      | "manager_groupings"
      | "planning_quantile"
      | "time_zone"
      | "max_hidden_share"
    >;
    privilege_audit: Table<
      {
        id: number;
        at: string;
        actor_id: number | null;
        actor_name: string;
        event: AuditEvent;
        request_id: number | null;
        target_user_id: number | null;
        api_key_id: number | null;
        subject: string;
        role: string;
      },
      "id"
    >;
    privilege_requests: Table<
      {
        id: number;
        kind: "role" | "api_key";
        role: Role;
        target_user_id: number | null;
        site_id: number | null;
        department_id: number | null;
        api_key_id: number | null;
        subject: string;
        requested_by: number | null;
        created_at: string;
        status: "pending" | "approved" | "refused";
        decided_by: number | null;
        decided_at: string | null;
      },
      "id" | "status"
    >;
    proficiency_criteria: Table<
      {
        device_type_id: number;
        score_threshold: number;
        consecutive_sessions: number;
        set_by: number | null;
        set_at: string;
      },
      "consecutive_sessions"
    >;
    published_plan_state: Table<
      {
        id: number;
        version: number;
        current_run_id: number | null;
        published_by: number | null;
        published_at: string | null;
      },
      "version"
    >;
    rate_limits: Table<
      {
        key: string;
        points: number;
        /** Epoch milliseconds; a bigint, so PostgreSQL may hand it back as a string. */
        expire: number | string | null;
      },
      "points"
    >;
    readiness_publications: Table<
      {
        id: number;
        table_key: string;
        grouping: string;
        counts: string;
        published: string;
        linked_to: number | null;
        note: string | null;
        created_at: string;
      },
      "id"
    >;
    /** One row (id 1): bumped by database triggers on every write under the readiness board. */
    readiness_generation: Table<{ id: number; value: number }>;
    readiness_receipts: Table<
      {
        id: number;
        publication_id: number;
        viewer_kind: string;
        viewer_id: number;
        received_at: string;
      },
      "id"
    >;
    review_flags: Table<
      {
        id: number;
        worker_id: number;
        device_type_id: number;
        kind: "plateau" | "beyond_forecast";
        reason: string;
        raised_at: string;
        resolved_by: number | null;
        resolved_at: string | null;
      },
      "id"
    >;
    review_requests: Table<
      {
        id: number;
        worker_id: number;
        subject: "forecast" | "plan";
        device_type_id: number | null;
        message: string;
        status: "open" | "answered";
        answer: string | null;
        answered_by: number | null;
        requested_by: number | null;
        created_at: string;
        answered_at: string | null;
      },
      "id" | "status"
    >;
    role_assignments: Table<
      {
        id: number;
        user_id: number;
        role: Role;
        site_id: number | null;
        department_id: number | null;
        created_at: string;
      },
      "id"
    >;
    roster_imports: Table<
      {
        id: number;
        filename: string;
        sha256: string;
        size_bytes: number;
        row_count: number;
        headers: string;
        rows: string | null;
        mapping: string | null;
        status: "uploaded" | "imported" | "discarded";
        summary: string | null;
        created_by: number | null;
        created_at: string;
        finished_at: string | null;
      },
      "id"
    >;
    safety_findings: Table<
      {
        id: number;
        worker_id: number;
        device_type_id: number;
        session_id: number | null;
        kind: "wear_time_breach";
        detail: string;
        recorded_by: number | null;
        raised_at: string;
        review_id: number | null;
      },
      "id"
    >;
    session_mark_undos: Table<
      {
        id: number;
        session_id: number;
        worker_id: number;
        trainer_id: number | null;
        mark: "attended" | "no_show";
        marked_at: string;
        /** JSON: what the undo removed. */
        removed: string;
        undone_by: number | null;
        undone_at: string;
      },
      "id"
    >;
    security_events: Table<
      {
        id: number;
        at: string;
        kind: string;
        subject: string;
        detail: string;
      },
      "id"
    >;
    sessions: Table<{
      id: string;
      data: string;
      expires_at: string | null;
      created_at: string;
    }>;
    site_closures: Table<
      {
        id: number;
        site_id: number;
        starts_on: string;
        ends_on: string;
        reason: string;
        source: "form" | "ics";
        created_by: number | null;
        created_at: string;
      },
      "id" | "created_by"
    >;
    site_working_hours: Table<
      {
        id: number;
        site_id: number;
        weekday: number;
        start_time: string;
        end_time: string;
      },
      "id"
    >;
    sites: Table<
      {
        id: number;
        organisation_id: number;
        code: string;
        name: string;
        created_at: string;
        time_zone: string;
      },
      "id" | "time_zone"
    >;
    stage_changes: Table<
      {
        id: number;
        worker_id: number;
        device_type_id: number | null;
        from_stage: Stage | null;
        to_stage: Stage;
        actor_user_id: number | null;
        at: string;
      },
      "id"
    >;
    trace_uploads: Table<
      {
        id: number;
        session_id: number;
        kind: TraceKind;
        filename: string;
        sha256: string;
        size_bytes: number;
        row_count: number;
        /** As recorded (declared or estimated from the timestamps). */
        sample_rate_hz: number | null;
        /** The common processing before the measures (sway traces; null for other kinds and older uploads). */
        resampled_rate_hz: number | null;
        filter: string | null;
        cutoff_hz: number | null;
        duration_seconds: number | null;
        computed: string;
        uploaded_by: number | null;
        created_at: string;
      },
      "id"
    >;
    trainer_certifications: Table<{
      trainer_id: number;
      device_type_id: number;
      certified_on: string | null;
    }>;
    trainer_leave: Table<
      {
        id: number;
        trainer_id: number;
        starts_on: string;
        ends_on: string;
        reason: string | null;
        created_at: string;
      },
      "id"
    >;
    trainer_working_pattern: Table<
      {
        id: number;
        trainer_id: number;
        weekday: number;
        start_time: string;
        end_time: string;
      },
      "id"
    >;
    trainers: Table<
      {
        id: number;
        user_id: number;
        site_id: number;
        trainees_per_session: number;
        hours_per_week: number;
        created_at: string;
        max_continuous_minutes: number;
        break_minutes: number;
      },
      "id" | "trainees_per_session" | "hours_per_week" | "max_continuous_minutes" | "break_minutes"
    >;
    training_sessions: Table<
      {
        id: number;
        worker_id: number;
        device_type_id: number;
        trainer_id: number | null;
        device_unit_id: number | null;
        allocation_run_id: number | null;
        scheduled_start: string | null;
        scheduled_end: string | null;
        status: "scheduled" | "attended" | "no_show" | "cancelled";
        duration_hours: number | null;
        task_score: number | null;
        cumulative_hours: number | null;
        notes: string | null;
        logged_by: number | null;
        logged_at: string | null;
        created_at: string;
        /** When the trainer made the mark (log or no-show); the undo is allowed on that site-local day. */
        marked_at: string | null;
        no_show_reason: NoShowReason | null;
        no_show_note: string | null;
        /** JSON: the course and stage before the log, for an undo. */
        undo_state: string | null;
      },
      "id" | "status" | "marked_at" | "no_show_reason" | "no_show_note" | "undo_state"
    >;
    unit_maintenance_windows: Table<
      {
        id: number;
        device_unit_id: number;
        starts_on: string;
        ends_on: string;
        reason: string | null;
        created_by: number | null;
        created_at: string;
      },
      "id"
    >;
    users: Table<
      {
        id: number;
        email: string;
        display_name: string;
        active: DbBoolean;
        created_at: string;
        last_sign_in_at: string | null;
      },
      "id" | "active"
    >;
    worker_leave: Table<
      {
        id: number;
        worker_id: number;
        starts_on: string;
        ends_on: string;
        reason: string | null;
        created_at: string;
      },
      "id"
    >;
    worker_training_fields: Table<
      {
        worker_id: number;
        max_hours_per_week: number | null;
        priority: number;
        priority_reason: string | null;
        updated_by: number | null;
        updated_at: string;
      },
      "priority"
    >;
    workers: Table<
      {
        id: number;
        employee_number: string;
        given_name: string;
        family_name: string;
        email: string | null;
        site_id: number;
        department_id: number;
        user_id: number | null;
        stage: Stage;
        created_at: string;
        updated_at: string;
      },
      "id" | "stage"
    >;
  }
}
