import type { TraceKind } from "~/compute/trace-parsing";
import { nowInstant } from "~/dates";
import { type Db, db, type TableRow } from "~/db.server";
import { conflict } from "~/errors";

// The baseline battery's measures, configured by an assessor.
export interface Measure {
  id: number;
  code: string;
  name: string;
  unit: string;
  higherIsBetter: boolean;
  entry: "manual" | "trace";
  traceKind: TraceKind | null;
  description: string | null;
  active: boolean;
}

function toMeasure(r: TableRow<"measures">): Measure {
  return {
    id: r.id,
    code: r.code,
    name: r.name,
    unit: r.unit,
    higherIsBetter: Boolean(r.higher_is_better),
    entry: r.entry,
    traceKind: r.trace_kind,
    description: r.description,
    active: Boolean(r.active),
  };
}

export async function listMeasures(opts: { activeOnly?: boolean } = {}, k: Db = db()): Promise<Measure[]> {
  const q = k("measures")
    .select("*")
    .orderBy([{ column: "entry" }, { column: "trace_kind" }, { column: "id" }]);
  if (opts.activeOnly) q.where("active", true);
  return (await q).map(toMeasure);
}

export async function createMeasure(
  m: {
    code: string;
    name: string;
    unit: string;
    direction: "higher" | "lower";
    entry: "manual" | "trace";
    traceKind?: TraceKind | "";
    description?: string;
  },
  userId: number,
) {
  return db().transaction(async (trx) => {
    if (await trx("measures").where({ code: m.code }).first("id"))
      throw conflict(`Code: a measure with code ${m.code} exists already.`, "code");
    const [r] = await trx("measures")
      .insert({
        code: m.code,
        name: m.name,
        unit: m.unit,
        higher_is_better: m.direction === "higher",
        entry: m.entry,
        trace_kind: m.entry === "trace" ? m.traceKind || null : null,
        description: m.description || null,
        active: true,
        created_by: userId,
        created_at: nowInstant(),
      })
      .returning("id");
    return r.id;
  });
}

export async function setMeasureActive(id: number, active: boolean): Promise<void> {
  await db()("measures").where({ id }).update({ active });
}
