import fs from "node:fs";
import path from "node:path";
import { outboxDir } from "~/config.server";

// Messages caught by the local SMTP catcher (development, demo, tests only).
export interface OutboxMessage {
  id: string;
  receivedAt: string;
  from: string;
  to: string[];
  subject: string;
  text: string;
  attachments: { filename: string; contentType: string; size: number }[];
}

export function readOutbox(limit = 200): OutboxMessage[] {
  if (!fs.existsSync(outboxDir)) return [];
  return fs
    .readdirSync(outboxDir)
    .filter((f) => f.endsWith(".json"))
    .sort()
    .reverse()
    .slice(0, limit)
    .map((f) => {
      const m = JSON.parse(fs.readFileSync(path.join(outboxDir, f), "utf8"));
      return {
        id: m.id,
        receivedAt: m.receivedAt,
        from: m.from,
        to: m.to,
        subject: m.subject,
        text: m.text,
        attachments: (m.attachments ?? []).map((a: { filename: string; contentType: string; size: number }) => ({
          filename: a.filename,
          contentType: a.contentType,
          size: a.size,
        })),
      };
    });
}
