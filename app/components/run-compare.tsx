// Two allocation runs side by side (what-if): parameters, outcome, and who is ready in one but not the other.
export interface CompareSide {
  id: number;
  label: string;
  parameters: string[];
  status: string;
  objective: number | null;
  bound: number | null;
  gap: number | null;
  ready: number;
  pool: number;
  byDevice: Record<string, number>;
  readyNames: Record<string, string>;
  binding: string[];
}

export function RunCompare({ a, b }: { a: CompareSide; b: CompareSide }) {
  const devices = [...new Set([...Object.keys(a.byDevice), ...Object.keys(b.byDevice)])].sort();
  const onlyA = Object.keys(a.readyNames).filter((id) => !(id in b.readyNames));
  const onlyB = Object.keys(b.readyNames).filter((id) => !(id in a.readyNames));
  const num = (v: number | null, digits = 1) => (v == null ? "—" : v.toFixed(digits));
  const rows: [string, string, string][] = [
    ["Status", a.status, b.status],
    ["Objective (priority made ready)", num(a.objective), num(b.objective)],
    ["Proven upper bound", num(a.bound), num(b.bound)],
    [
      "Gap",
      a.gap == null ? "—" : `${(a.gap * 100).toFixed(1)} %`,
      b.gap == null ? "—" : `${(b.gap * 100).toFixed(1)} %`,
    ],
    ["Workers ready / in pool", `${a.ready} / ${a.pool}`, `${b.ready} / ${b.pool}`],
    ...devices.map(
      (d) => [`Ready on ${d}`, String(a.byDevice[d] ?? 0), String(b.byDevice[d] ?? 0)] as [string, string, string],
    ),
  ];
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
            {rows.map(([k, x, y]) => (
              <tr key={k}>
                <th scope="row">{k}</th>
                <td className={x !== y ? "font-semibold" : ""}>{x}</td>
                <td className={x !== y ? "font-semibold" : ""}>{y}</td>
              </tr>
            ))}
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
            </tr>
          </tbody>
        </table>
      </section>
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
