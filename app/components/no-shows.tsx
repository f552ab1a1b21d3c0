import type { ProgressView } from "~/models/progress.server";

/** Missed sessions on a course, counted plainly by the reason the trainer recorded. */
export function NoShows({ noShows, reader }: { noShows: ProgressView["noShows"]; reader: "staff" | "worker" }) {
  if (noShows.total === 0) return null;
  return (
    <p className="text-sm" data-testid="no-shows">
      {reader === "worker" ? "Sessions you missed" : "Missed sessions (no-shows)"}: {noShows.total} —{" "}
      {noShows.byReason.map((r) => `${r.reason} (${r.count})`).join(", ")}.
    </p>
  );
}
