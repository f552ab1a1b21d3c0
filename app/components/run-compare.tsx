// Two allocation runs side by side (what-if): parameters, outcome, and who is ready in one but not the other.
export interface CompareSide {
  id: number;
  label: string;
  parameters: string[];
  status: string;
  /** the solver's objective (a re-plan's includes the bonus for kept sessions) */
  objective: number | null;
  /** the sum of the priorities of the people ready after placement */
  value: number | null;
  bound: number | null;
  gap: number | null;
  ready: number;
  pool: number;
  byDevice: Record<string, number>;
  readyNames: Record<string, string>;
  binding: string[];
}

interface Row {
  label: string;
  a: number | null;
  b: number | null;
  digits: number;
}

export function RunCompare({ a, b }: { a: CompareSide; b: CompareSide }) {
  const devices = [...new Set([...Object.keys(a.byDevice), ...Object.keys(b.byDevice)])].sort();
  const onlyA = Object.keys(a.readyNames).filter((id) => !(id in b.readyNames));
  const onlyB = Object.keys(b.readyNames).filter((id) => !(id in a.readyNames));
  const STATUS_WORDS: Record<string, string> = {
    optimal: "the best possible",
    feasible: "good; not proven the best",
    infeasible: "no plan meets the conditions",
  };
  const words = (status: string) => STATUS_WORDS[status] ?? status;
  // numbers compared as shown (one decimal): a difference only where the shown values differ
  const rows: Row[] = [
    { label: "Value made ready (sum of priorities)", a: a.value, b: b.value, digits: 1 },
    { label: "People ready", a: a.ready, b: b.ready, digits: 0 },
    { label: "People in the pool", a: a.pool, b: b.pool, digits: 0 },
    ...devices.map((d) => ({ label: `Ready on ${d}`, a: a.byDevice[d] ?? 0, b: b.byDevice[d] ?? 0, digits: 0 })),
  ];
  const shown = (v: number | null, digits: number) => (v == null ? "—" : v.toFixed(digits));
  const difference = (r: Row) => {
    if (r.a == null || r.b == null) return null;
    const d = Number((r.b - r.a).toFixed(r.digits));
    return d === 0 ? null : d;
  };
  const gapText = (g: number | null) => (g == null ? "—" : `${(g * 100).toFixed(1)} %`);
  return (
    <div className="grid gap-4">
      <section className="card overflow-x-auto p-0" tabIndex={0} aria-label="Runs compared (scrolls sideways)">
        <table className="table-base" data-testid="run-compare">
          <caption className="sr-only">
            Run #{a.id} and run #{b.id} side by side
          </caption>
          <thead>
            <tr>
              <th scope="col">Measure</th>
              <th scope="col">
                Run #{a.id}: {a.label}
              </th>
              <th scope="col">
                Run #{b.id}: {b.label}
              </th>
              <th scope="col">{`Difference (#${b.id} − #${a.id})`}</th>
            </tr>
          </thead>
          <tbody>
            <tr>
              <th scope="row">Parameters</th>
              <td>
                <ul className="list-disc pl-4">
                  {a.parameters.map((p) => (
                    <li key={p}>{p}</li>
                  ))}
                </ul>
              </td>
              <td>
                <ul className="list-disc pl-4">
                  {b.parameters.map((p) => (
                    <li key={p}>{p}</li>
                  ))}
                </ul>
              </td>
            </tr>
            <tr>
              <th scope="row">The plan is</th>
              <td className={a.status !== b.status ? "font-semibold" : ""}>{words(a.status)}</td>
              <td className={a.status !== b.status ? "font-semibold" : ""}>{words(b.status)}</td>
              <td>{a.status !== b.status ? "differs" : ""}</td>
            </tr>
            {rows.map((r) => {
              const d = difference(r);
              return (
                <tr key={r.label} data-differs={d !== null ? "yes" : "no"}>
                  <th scope="row">{r.label}</th>
                  <td className={d !== null ? "font-semibold" : ""}>{shown(r.a, r.digits)}</td>
                  <td className={d !== null ? "font-semibold" : ""}>{shown(r.b, r.digits)}</td>
                  <td className={d !== null ? "font-semibold" : "text-ink-soft"}>
                    {d === null ? "same" : `${d > 0 ? "+" : "−"}${Math.abs(d).toFixed(r.digits)}`}
                  </td>
                </tr>
              );
            })}
            <tr>
              <th scope="row">What binds most</th>
              <td>
                <ul className="list-disc pl-4">
                  {a.binding.slice(0, 3).map((t) => (
                    <li key={t}>{t}</li>
                  ))}
                </ul>
                {a.binding.length === 0 && "Nothing binds."}
              </td>
              <td>
                <ul className="list-disc pl-4">
                  {b.binding.slice(0, 3).map((t) => (
                    <li key={t}>{t}</li>
                  ))}
                </ul>
                {b.binding.length === 0 && "Nothing binds."}
              </td>
              <td />
            </tr>
          </tbody>
        </table>
      </section>
      <details className="card text-sm">
        <summary className="cursor-pointer font-semibold">How this was computed (exact terms)</summary>
        <p className="mt-2">
          Objective = Σ priority of the workers made ready (plus the keep weight per person kept, for a run from the
          published plan). Run #{a.id}: solver status {a.status}, objective {shown(a.objective, 1)}, proven upper bound{" "}
          {shown(a.bound, 1)}, gap {gapText(a.gap)}. Run #{b.id}: solver status {b.status}, objective{" "}
          {shown(b.objective, 1)}, proven upper bound {shown(b.bound, 1)}, gap {gapText(b.gap)}. "Value made ready" in
          the table is Σ priority of the people ready after placing sessions, without any keep weight.
        </p>
      </details>
      <div className="grid gap-4 md:grid-cols-2">
        <section aria-labelledby="only-a" className="card">
          <h2 id="only-a" className="font-semibold">
            Ready only in run #{a.id} ({onlyA.length})
          </h2>
          <ul className="mt-2 list-disc pl-5 text-sm">
            {onlyA.map((id) => (
              <li key={id}>{a.readyNames[id]}</li>
            ))}
          </ul>
        </section>
        <section aria-labelledby="only-b" className="card">
          <h2 id="only-b" className="font-semibold">
            Ready only in run #{b.id} ({onlyB.length})
          </h2>
          <ul className="mt-2 list-disc pl-5 text-sm">
            {onlyB.map((id) => (
              <li key={id}>{b.readyNames[id]}</li>
            ))}
          </ul>
        </section>
      </div>
    </div>
  );
}
