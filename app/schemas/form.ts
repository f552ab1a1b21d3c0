import type { SubmissionResult } from "@conform-to/react";
import { z } from "zod";

/**
 * The one shape every form action answers with: which form (`intent`) it was, conform's result
 * (field and form errors, the values sent) and, on success, the notice to show and any data for the page.
 */
export interface ActionResult<T = undefined> {
  intent: string | null;
  result: SubmissionResult<string[]>;
  notice: string | null;
  payload?: T;
}

// A JSON body read through a zod schema (the API's `apiAction`), with the first message per field.
export type FieldErrors = Record<string, string>;

export function parseWith<S extends z.ZodType>(
  schema: S,
  input: unknown,
): { ok: true; data: z.infer<S> } | { ok: false; errors: FieldErrors } {
  const r = schema.safeParse(input);
  if (r.success) return { ok: true, data: r.data };
  const errors: FieldErrors = {};
  for (const issue of r.error.issues) {
    const key = issue.path.join(".") || "_form";
    if (!errors[key]) errors[key] = issue.message;
  }
  return { ok: false, errors };
}

/**
 * The schema of a page with several forms: one object schema per form, told apart by its `intent`
 * literal, so an action parses its input once and switches on `value.intent`.
 */
export function intents<const O extends readonly [z.ZodObject, ...z.ZodObject[]]>(...options: O) {
  return z.discriminatedUnion("intent", options as unknown as [z.ZodObject, ...z.ZodObject[]], {
    error: "Intent: this form's action is not known; reload the page and try again.",
  }) as unknown as z.ZodDiscriminatedUnion<O>;
}
