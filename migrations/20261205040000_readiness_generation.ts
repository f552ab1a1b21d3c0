import type { Knex } from "knex";

// One number that changes whenever data under the readiness board changes, so every app instance can
// keep the board's protected tables until then (app/models/readiness.server.ts). Database triggers bump
// it inside the transaction of every write to the tables the board counts — whoever writes them, now or
// later — so a cached board can never outlive a committed change. The value only grows: each bump adds 1,
// the demo seed's reset leaves the table alone, and a missing row starts again from the clock in ms.
// On PostgreSQL the bump is a deferred constraint trigger, once per transaction at commit: the row lock it
// takes is the last lock of the transaction, so writers never deadlock on it.

/** The tables the board reads, with the columns whose updates change what it shows (null: any column). */
export const READINESS_SOURCES: Record<string, string[] | null> = {
  organisations: ["name", "disclosure_threshold", "manager_groupings", "max_hidden_share"],
  sites: ["name"],
  departments: ["name", "site_id"],
  device_types: ["name"],
  workers: ["stage", "department_id"],
  device_courses: ["status", "worker_id", "device_type_id"],
  training_sessions: ["status", "scheduled_start", "allocation_run_id", "worker_id", "device_type_id"],
  allocation_runs: ["published_at"],
  forecasts: null,
  model_versions: ["status"],
};

const isPg = (knex: Knex) => String(knex.client.config.client) === "pg";

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("readiness_generation", (t) => {
    t.integer("id").primary();
    t.bigInteger("value").notNullable();
  });
  await knex("readiness_generation").insert({ id: 1, value: Date.now() });
  if (isPg(knex)) {
    await knex.raw(`
      create function limberly_bump_readiness() returns trigger language plpgsql as $$
      begin
        if coalesce(current_setting('limberly.readiness_bumped', true), '') <> '1' then
          perform set_config('limberly.readiness_bumped', '1', true);
          insert into readiness_generation (id, value)
            values (1, (extract(epoch from clock_timestamp()) * 1000)::bigint)
            on conflict (id) do update
              set value = readiness_generation.value + 1;
        end if;
        return null;
      end $$`);
    for (const [table, columns] of Object.entries(READINESS_SOURCES)) {
      const update = columns ? `update of ${columns.join(", ")}` : "update";
      await knex.raw(
        `create constraint trigger readiness_bump after insert or delete or ${update} on ${table}
         deferrable initially deferred for each row execute function limberly_bump_readiness()`,
      );
      await knex.raw(
        `create trigger readiness_bump_truncate after truncate on ${table}
         for each statement execute function limberly_bump_readiness()`,
      );
    }
    return;
  }
  const bump = `insert into readiness_generation (id, value) values (1, cast(unixepoch('subsec') * 1000 as integer))
    on conflict (id) do update set value = readiness_generation.value + 1;`;
  for (const [table, columns] of Object.entries(READINESS_SOURCES))
    for (const [op, event] of [
      ["ins", "insert"],
      ["del", "delete"],
      ["upd", columns ? `update of ${columns.join(", ")}` : "update"],
    ])
      await knex.raw(`create trigger readiness_bump_${table}_${op} after ${event} on ${table} begin ${bump} end`);
}

export async function down(knex: Knex): Promise<void> {
  if (isPg(knex)) {
    for (const table of Object.keys(READINESS_SOURCES)) {
      await knex.raw(`drop trigger if exists readiness_bump on ${table}`);
      await knex.raw(`drop trigger if exists readiness_bump_truncate on ${table}`);
    }
    await knex.raw("drop function if exists limberly_bump_readiness()");
  } else
    for (const table of Object.keys(READINESS_SOURCES))
      for (const op of ["ins", "del", "upd"]) await knex.raw(`drop trigger if exists readiness_bump_${table}_${op}`);
  await knex.schema.dropTable("readiness_generation");
}
