// Ports of the e2e stack. Defaults are this suite's own (others run their stacks on other ports);
// E2E_APP_PORT, E2E_IDP_PORT and E2E_SMTP_PORT override them.
function port(name: string, fallback: number): number {
  const v = process.env[name];
  if (v == null || v === "") return fallback;
  const n = Number(v);
  if (!Number.isInteger(n) || n < 1 || n > 65535)
    throw new Error(`${name} must be a port number (1–65535), got "${v}".`);
  return n;
}

export const e2ePorts = {
  app: port("E2E_APP_PORT", 3400),
  idp: port("E2E_IDP_PORT", 9700),
  smtp: port("E2E_SMTP_PORT", 2800),
};
