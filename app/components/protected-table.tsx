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
  return (
    <div className="min-w-0">
      <section
        className="relative overflow-x-auto rounded-md border border-line"
        tabIndex={0}
        aria-labelledby={`${id}-caption`}
      >
        <table
          className="table-base min-w-max"
          data-testid={id}
          aria-describedby={anyHidden ? `${id}-legend` : undefined}
        >
          <caption id={`${id}-caption`} className="px-3 py-2 text-left font-semibold text-ink">
            {caption}
          </caption>
          <thead>
            <tr>
              <th scope="col">{rowHeader}</th>
              {columns.map((c) => (
                <th key={c} scope="col" className="text-right">
                  {c}
                </th>
              ))}
              {withTotals && (
                <th scope="col" className="text-right">
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
                    <Value v={cells[i][j]} threshold={threshold} format={format} />
                  </td>
                ))}
                {withTotals && (
                  <td className="text-right font-semibold tabular-nums">
                    <Value v={rowTotals[i]} threshold={threshold} format={format} />
                  </td>
                )}
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
                    <Value v={columnTotals[j]} threshold={threshold} format={format} />
                  </td>
                ))}
                {withTotals && (
                  <td className="text-right font-semibold tabular-nums">
                    <Value v={grandTotal ?? null} threshold={threshold} format={format} />
                  </td>
                )}
              </tr>
            </tfoot>
          )}
        </table>
      </section>
      {anyHidden && <HiddenLegend id={`${id}-legend`} threshold={threshold} meaning={hiddenMeaning} />}
    </div>
  );
}
