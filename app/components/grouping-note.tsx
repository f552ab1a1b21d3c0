import type { GroupingUsed } from "~/models/readiness.server";

/** Which grouping a protected table uses and why (set by the board's grouping rule). */
export function GroupingNote({ grouping }: { grouping: GroupingUsed }) {
  return (
    <p className="text-sm text-ink-soft" data-testid="grouping-note">
      {`Grouping: ${grouping.label}.`}
      {grouping.reason ? ` ${grouping.reason}` : ""}
      {grouping.note ? ` ${grouping.note}` : ""}
      {grouping.updating && (
        <span className="mt-1 block font-semibold text-amber-caution" data-testid="grouping-updating">
          {grouping.updating}
        </span>
      )}
    </p>
  );
}
