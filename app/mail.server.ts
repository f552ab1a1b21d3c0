import nodemailer, { type Transporter } from "nodemailer";
import { mail } from "~/config.server";

// Outgoing e-mail over SMTP (in development, demo and tests: the local catcher, scripts/smtp-catcher.ts).
let transport: Transporter | null = null;

function transporter(): Transporter {
  if (!transport) {
    transport = nodemailer.createTransport({
      host: mail.host,
      port: mail.port,
      secure: false,
      ignoreTLS: mail.host === "127.0.0.1" || mail.host === "localhost",
    });
  }
  return transport;
}

export interface OutgoingMail {
  to: string | string[];
  subject: string;
  text: string;
  html?: string;
  attachments?: { filename: string; content: string | Buffer; contentType?: string }[];
}

export async function sendMail(message: OutgoingMail): Promise<void> {
  await transporter().sendMail({ from: mail.from, ...message });
}
