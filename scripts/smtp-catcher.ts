// Local SMTP catcher: accepts every message on loopback and writes it, parsed, as JSON into the outbox
// folder, where tests read it and the admin outbox page lists it.
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { simpleParser } from "mailparser";
import { SMTPServer } from "smtp-server";

export interface CaughtMessage {
  id: string;
  receivedAt: string;
  from: string;
  to: string[];
  subject: string;
  text: string;
  html: string | null;
  attachments: { filename: string; contentType: string; size: number; content: string /* base64 */ }[];
}

export async function startSmtpCatcher(port: number, outboxDir: string): Promise<{ stop: () => Promise<void> }> {
  fs.mkdirSync(outboxDir, { recursive: true });
  let seq = 0;
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ["STARTTLS"],
    logger: false,
    onData(stream, session, callback) {
      simpleParser(stream)
        .then((mail) => {
          const receivedAt = new Date().toISOString();
          const id = `${receivedAt.replace(/[:.]/g, "-")}-${process.pid}-${++seq}`;
          const msg: CaughtMessage = {
            id,
            receivedAt,
            from: mail.from?.text ?? "",
            to: session.envelope.rcptTo.map((r) => r.address),
            subject: mail.subject ?? "",
            text: mail.text ?? "",
            html: typeof mail.html === "string" ? mail.html : null,
            attachments: mail.attachments.map((a) => ({
              filename: a.filename ?? "attachment",
              contentType: a.contentType,
              size: a.size,
              content: a.content.toString("base64"),
            })),
          };
          fs.writeFileSync(path.join(outboxDir, `${id}.json`), JSON.stringify(msg, null, 2));
          callback();
        })
        .catch((e) => callback(e));
    },
  });
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(port, "127.0.0.1", () => resolve());
  });
  return { stop: () => new Promise((resolve) => server.close(() => resolve())) };
}

export function readOutbox(outboxDir: string): CaughtMessage[] {
  if (!fs.existsSync(outboxDir)) return [];
  return fs
    .readdirSync(outboxDir)
    .filter((f) => f.endsWith(".json"))
    .sort()
    .map((f) => JSON.parse(fs.readFileSync(path.join(outboxDir, f), "utf8")) as CaughtMessage);
}

if (process.argv[1] === fileURLToPath(import.meta.url)) {
  const port = Number(process.env.SMTP_PORT ?? 2525);
  const dir = process.env.OUTBOX_DIR ?? "data/outbox";
  await startSmtpCatcher(port, dir);
  console.log(`SMTP catcher on 127.0.0.1:${port}, writing to ${dir}`);
}
