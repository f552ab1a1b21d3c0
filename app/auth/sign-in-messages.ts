// What the sign-in pages may say after a failed sign-in: a fixed list keyed by a short code in the URL.
// The pages never echo text from the URL, so a crafted link cannot put its own words on them.
export const SIGN_IN_ERRORS = {
  "callback-failed":
    "Sign-in did not complete. Please try again; if it keeps failing, tell your Limberly administrator.",
  "state-mismatch": "Sign-in was started in another tab or took too long. Please start again.",
} as const;
export type SignInErrorCode = keyof typeof SIGN_IN_ERRORS;

/** The message for `code`; any code not on the list gets the generic one, no code gets none. */
export function signInErrorMessage(code: string | null): string | null {
  if (!code) return null;
  return Object.hasOwn(SIGN_IN_ERRORS, code)
    ? SIGN_IN_ERRORS[code as SignInErrorCode]
    : SIGN_IN_ERRORS["callback-failed"];
}
