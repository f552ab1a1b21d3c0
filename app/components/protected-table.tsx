import { HIDDEN_SYMBOL } from "~/compute/readiness-views";

// A table of protected figures (disclosure control has already run on the server). Hidden numbers
// read as one clear symbol with a spoken label; the legend under the table says why they are hidden.
export interface ProtectedTableViewProps {
  id: string;
  caption: string;
  rowHeader: string;
  rows: string[];
  columns: string[];
  cells: (number | null)[][];
  rowTotals?: (number | null)[];
  columnTotals?: (number | null)[];
  grandTotal?: number | null;
  threshold: number;
  format?: (v: number) => string;
  /** What a hidden number means here (defaults to the count wording). */
  hiddenMeaning?: string;
}

export function HiddenValue({ threshold }: { threshold: number }) {
  return (
    <span
      title={`Hidden to protect a group of fewer than ${threshold} people`}
      className="font-semibold text-amber-caution"
    >
      <span aria-hidden="true">{HIDDEN_SYMBOL}</span>
      <span className="sr-only">hidden</span>
    </span>
  );
}

function Value({ v, threshold, format }: { v: number | null; threshold: number; format?: (v: number) => string }) {
  if (v === null) return <HiddenValue threshold={threshold} />;
  return <>{format ? format(v) : v.toLocaleString("en-GB")}</>;
}

export function HiddenLegend({ threshold, meaning, id }: { threshold: number; meaning?: string; id?: string }) {
  return (
    <p id={id} className="mt-2 text-sm text-ink-soft">
      <span aria-hidden="true" className="font-semibold text-amber-caution">
        {HIDDEN_SYMBOL}
      </span>{" "}
      {meaning ??
        `Hidden: a count of 1 to ${threshold - 1} people, or a number that would let such a count be worked out from the others shown (including totals). Zeros are shown.`}
    </p>
  );
}

export function ProtectedTableView(props: ProtectedTableViewProps) {
  const {
    id,
    caption,
    rowHeader,
    rows,
    columns,
    cells,
    rowTotals,
    columnTotals,
    grandTotal,
    threshold,
    format,
    hiddenMeaning,
  } = props;
  const anyHidden =
    cells.some((l) => l.some((v) => v === null)) ||
    (rowTotals ?? []).some((v) => v === null) ||
    (columnTotals ?? []).some((v) => v === null) ||
    grandTotal === null;
  const withTotals = rowTotals !== undefined;
  const show = (v: number | null | undefined) => <Value v={v ?? null} threshold={threshold} format={format} />;
  const lines = [
    ...rows.map((r, i) => ({ label: r, values: cells[i], total: rowTotals?.[i], isTotal: false })),
    ...(columnTotals ? [{ label: "Total", values: columnTotals, total: grandTotal, isTotal: true }] : []),
  ];
  return (
    <div className="min-w-0">
      {/* From the small breakpoint up: a table that fits its column (headings wrap between words). */}
      <section
        className="relative hidden rounded-md border border-line sm:block print:block"
        aria-labelledby={`${id}-caption`}
      >
        <table className="table-base" data-testid={id} aria-describedby={anyHidden ? `${id}-legend` : undefined}>
          <caption id={`${id}-caption`} className="px-3 py-2 text-left font-semibold text-ink">
            {caption}
          </caption>
          <thead>
            <tr>
              <th scope="col" className="align-bottom">
                {rowHeader}
              </th>
              {columns.map((c) => (
                <th key={c} scope="col" className="text-right align-bottom">
                  {c}
                </th>
              ))}
              {withTotals && (
                <th scope="col" className="text-right align-bottom">
                  Total
                </th>
              )}
            </tr>
          </thead>
          <tbody>
            {rows.map((r, i) => (
              <tr key={r}>
                <th scope="row" className="font-medium text-ink">
                  {r}
                </th>
                {columns.map((c, j) => (
                  <td key={c} className="text-right tabular-nums">
                    {show(cells[i][j])}
                  </td>
                ))}
                {withTotals && <td className="text-right font-semibold tabular-nums">{show(rowTotals[i])}</td>}
              </tr>
            ))}
          </tbody>
          {columnTotals && (
            <tfoot>
              <tr>
                <th scope="row" className="font-semibold text-ink">
                  Total
                </th>
                {columns.map((c, j) => (
                  <td key={c} className="text-right font-semibold tabular-nums">
                    {show(columnTotals[j])}
                  </td>
                ))}
                {withTotals && <td className="text-right font-semibold tabular-nums">{show(grandTotal)}</td>}
              </tr>
            </tfoot>
          )}
        </table>
      </section>
      {/* On a phone: one card per row, each figure with its column name beside it. */}
      <section className="grid gap-2 sm:hidden print:hidden" aria-label={caption} data-testid={`${id}-cards`}>
        <h3 className="font-semibold text-ink">{caption}</h3>
        {lines.map((line) => (
          <div key={line.label} className="rounded-md border border-line p-3">
            <h4 className={line.isTotal ? "font-semibold" : "font-medium"}>{line.label}</h4>
            <dl className="mt-1 grid grid-cols-[1fr_auto] gap-x-3 gap-y-1 text-sm">
              {columns.map((c, j) => (
                <div key={c} className="contents">
                  <dt className="text-ink-soft">{c}</dt>
                  <dd className="text-right tabular-nums">{show(line.values[j])}</dd>
                </div>
              ))}
              {withTotals && (
                <div className="contents">
                  <dt className="font-semibold text-ink-soft">Total</dt>
                  <dd className="text-right font-semibold tabular-nums">{show(line.total)}</dd>
                </div>
              )}
            </dl>
          </div>
        ))}
      </section>
      {anyHidden && <HiddenLegend id={`${id}-legend`} threshold={threshold} meaning={hiddenMeaning} />}
    </div>
  );
}
