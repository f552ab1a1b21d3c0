import type { Submission } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data } from "react-router";
import type { z } from "zod";
import { UserError } from "~/errors";
import { type ActionResult, parseWith } from "~/schemas/form";

// One way for every action to read a form, run the change and answer: the zod schema (for a page
// with several forms, a discriminated union on `intent`) is parsed once; schema issues and a thrown
// UserError both come back as conform's SubmissionResult, so the form shows them at the field.

/** What a successful action hands back: the notice to show, or the notice plus data for the page. */
export type Done<T> = string | { notice: string | null; payload: T };

/** Parse form data with the shared schema. Values stay strings: the schemas do their own coercion. */
export function parseSubmission<S extends z.ZodType>(formData: FormData | URLSearchParams, schema: S) {
  return parseWithZod(formData, { schema, disableAutoCoercion: true });
}

function intentOf(formData: FormData | URLSearchParams): string | null {
  const v = formData.get("intent");
  return typeof v === "string" ? v : null;
}

function failed<T>(intent: string | null, submission: Submission<unknown, string[], unknown>, e: unknown) {
  if (!(e instanceof UserError)) throw e;
  const result = e.field
    ? submission.reply({ fieldErrors: { [e.field]: [e.message] } })
    : submission.reply({ formErrors: [e.message] });
  return data<ActionResult<T>>({ intent, result, notice: null }, { status: e.status });
}

/**
 * Parse `formData` with `schema`, then `run` the change with the parsed value. Bad input answers 400
 * with the schema's messages; a UserError answers its own status and message; anything else is a bug
 * and propagates (500).
 */
export async function formAction<S extends z.ZodType, T = undefined>(
  formData: FormData | URLSearchParams,
  schema: S,
  run: (value: z.output<S>) => Promise<Done<T>>,
) {
  const intent = intentOf(formData);
  const submission = parseSubmission(formData, schema);
  if (submission.status !== "success")
    return data<ActionResult<T>>({ intent, result: submission.reply(), notice: null }, { status: 400 });
  try {
    const done = await run(submission.value as z.output<S>);
    const result = submission.reply();
    return typeof done === "string"
      ? ({ intent, result, notice: done } satisfies ActionResult<T>)
      : ({ intent, result, notice: done.notice, payload: done.payload } satisfies ActionResult<T>);
  } catch (e) {
    return failed<T>(intent, submission, e);
  }
}

/**
 * A UserError as a JSON response `{ error, field?, fields? }` with its status (`fields` maps the field to
 * the message, the shape an API body's schema errors have): returned by API routes, thrown by loaders (the
 * error boundary shows `error`). Anything else is rethrown.
 */
export function userErrorResponse(e: unknown): Response {
  if (!(e instanceof UserError)) throw e;
  const named = e.field ? { field: e.field, fields: { [e.field]: e.message } } : {};
  return Response.json({ error: e.message, ...named }, { status: e.status });
}

/**
 * An API route's JSON body, parsed with the same schema as the form, then `run`: a body that is not JSON
 * answers 400; one the schema refuses answers 400 `{ error: invalid, fields }` (the first message per
 * field); a UserError answers as `userErrorResponse`; anything else is a bug and propagates (500).
 */
export async function apiAction<S extends z.ZodType>(
  request: Request,
  schema: S,
  invalid: string,
  run: (value: z.output<S>) => Promise<Response>,
): Promise<Response> {
  let body: unknown;
  try {
    body = await request.json();
  } catch {
    return Response.json({ error: "The body must be JSON." }, { status: 400 });
  }
  const parsed = parseWith(schema, body);
  if (!parsed.ok) return Response.json({ error: invalid, fields: parsed.errors }, { status: 400 });
  try {
    return await run(parsed.data);
  } catch (e) {
    return userErrorResponse(e);
  }
}

/** Runs a loader's body; a UserError it throws is answered as its JSON response (the error boundary shows it). */
export async function answerUserErrors<T>(run: () => Promise<T>): Promise<T> {
  try {
    return await run();
  } catch (e) {
    if (e instanceof UserError) throw userErrorResponse(e);
    throw e;
  }
}
