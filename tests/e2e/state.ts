// Where the running e2e stack is: written by global-setup.ts, read by the fixtures.
import fs from "node:fs";

export const STATE_ENV = "LIMBERLY_E2E_STATE";

export interface E2eState {
  baseURL: string; // the app, e.g. http://localhost:3400
  issuer: string; // the identity-provider stand-in
  smtpPort: number; // the SMTP catcher (127.0.0.1)
  outboxDir: string; // where the catcher writes one JSON file per message
  databaseUrl: string; // the temp SQLite file the app runs on
  tempDir: string;
}

let cached: E2eState | null = null;

export function e2eState(): E2eState {
  if (cached) return cached;
  const file = process.env[STATE_ENV];
  if (!file || !fs.existsSync(file)) {
    throw new Error(
      `${STATE_ENV} is not set or its file is missing: run the e2e tests through tests/e2e/playwright.config.ts, whose global setup starts the stack.`,
    );
  }
  cached = JSON.parse(fs.readFileSync(file, "utf8")) as E2eState;
  return cached;
}
