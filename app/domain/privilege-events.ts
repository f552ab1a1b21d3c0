// What the role and key audit log records (models/duties.server.ts), and how each entry reads.
export type AuditEvent = "requested" | "approved" | "refused" | "granted" | "removed" | "key-created" | "key-revoked";

export const AUDIT_EVENT_LABELS: Record<AuditEvent, string> = {
  requested: "asked a second admin to approve",
  approved: "approved",
  refused: "refused",
  granted: "granted",
  removed: "removed",
  "key-created": "created API key",
  "key-revoked": "revoked API key",
};
