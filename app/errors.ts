// A failure the user can act on: what went wrong (naming the field where there is one) and the HTTP
// status it is answered with. Models throw it; `app/forms.server.ts` turns it into the response, the
// same way for every form action, loader and API route.
export class UserError extends Error {
  readonly status: number;
  readonly field?: string;
  /** For a refusal that passes (429): when to try again, sent as Retry-After. */
  readonly retryAfterSeconds?: number;

  constructor(message: string, options: { status?: number; field?: string; retryAfterSeconds?: number } = {}) {
    super(message);
    this.name = "UserError";
    this.status = options.status ?? 400;
    this.field = options.field;
    this.retryAfterSeconds = options.retryAfterSeconds;
  }
}

/** The thing asked for does not exist, or not in the caller's scope (404). */
export function notFound(message: string, field?: string): UserError {
  return new UserError(message, { status: 404, field });
}

/** The request clashes with what is stored (409), e.g. a code already used. */
export function conflict(message: string, field?: string): UserError {
  return new UserError(message, { status: 409, field });
}
