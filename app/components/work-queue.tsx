import { Link } from "react-router";
import type { QueueItem } from "~/models/work-queues.server";

/** A role's home: what waits for this person, with counts and a link to where it is done. */
export function WorkQueue({ items }: { items: QueueItem[] }) {
  const waiting = items.filter((i) => i.count > 0).length;
  return (
    <section className="card grid gap-3" aria-labelledby="work-queue-h" data-testid="work-queue">
      <h2 id="work-queue-h" className="text-lg font-semibold">
        Waiting for you
        <span className="ml-2 text-sm font-normal text-ink-soft">
          {waiting === 0 ? "nothing right now" : `${waiting} of ${items.length} lists have something`}
        </span>
      </h2>
      <ul className="grid gap-2">
        {items.map((i) => (
          <li key={i.key}>
            <Link
              to={i.to}
              className={`flex items-start justify-between gap-3 rounded-md border border-line p-3 hover:bg-spruce-50 ${i.count === 0 ? "text-ink-soft" : ""}`}
              data-testid={`queue-${i.key}`}
            >
              <span>
                <span className={i.count > 0 ? "font-medium text-ink" : ""}>{i.label}</span>
                <span className="block text-sm text-ink-soft">{i.hint}</span>
              </span>
              <span
                className={`min-w-10 text-right text-2xl tabular-nums ${i.count > 0 ? "font-semibold text-spruce-800" : ""}`}
              >
                {i.count.toLocaleString("en-GB")}
              </span>
            </Link>
          </li>
        ))}
      </ul>
    </section>
  );
}
