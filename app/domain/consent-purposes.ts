// The purposes a worker consents to, one by one (docs/consent-and-disclosure.md). This is the only list:
// schemas, models and pages all read it from here.
export const CONSENT_PURPOSES = ["assessment", "planning", "model"] as const;
export type ConsentPurpose = (typeof CONSENT_PURPOSES)[number];
