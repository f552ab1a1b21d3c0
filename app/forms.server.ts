import type { Submission } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { data } from "react-router";
import { z } from "zod";
import { UserError } from "~/errors";
import { readMultipart, type UploadedFile } from "~/models/uploads.server";
import { type ActionResult, parseWith } from "~/schemas/form";

// One way for every action to read a form, run the change and answer: the zod schema (for a page
// with several forms, a discriminated union on `intent`) is parsed once; schema issues and a thrown
// UserError both come back as conform's SubmissionResult, so the form shows them at the field.

/**
 * What a successful action hands back: the notice to show, or the notice plus data for the page (with a
 * status of its own where the data report a refusal, e.g. 422 for a file's row-by-row problems).
 */
export type Done<T> = string | { notice: string | null; payload: T; status?: number };

/** Parse form data with the shared schema. Values stay strings: the schemas do their own coercion. */
export function parseSubmission<S extends z.ZodType>(formData: FormData | URLSearchParams, schema: S) {
  return parseWithZod(formData, { schema, disableAutoCoercion: true });
}

function intentOf(formData: FormData | URLSearchParams): string | null {
  const v = formData.get("intent");
  return typeof v === "string" ? v : null;
}

function retryAfter(e: UserError): HeadersInit | undefined {
  return e.retryAfterSeconds ? { "Retry-After": String(e.retryAfterSeconds) } : undefined;
}

function failed<T>(intent: string | null, submission: Submission<unknown, string[], unknown>, e: unknown) {
  if (!(e instanceof UserError)) throw e;
  const result = e.field
    ? submission.reply({ fieldErrors: { [e.field]: [e.message] } })
    : submission.reply({ formErrors: [e.message] });
  return data<ActionResult<T>>({ intent, result, notice: null }, { status: e.status, headers: retryAfter(e) });
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
    if (typeof done === "string") return data<ActionResult<T>>({ intent, result, notice: done });
    return data<ActionResult<T>>(
      { intent, result, notice: done.notice, payload: done.payload },
      { status: done.status ?? 200 },
    );
  } catch (e) {
    return failed<T>(intent, submission, e);
  }
}

/** The file field of an upload form. */
export interface UploadField {
  name: string;
  /** The field's label: every error at the field starts with it ("Roster file: …"). */
  label: string;
  maxBytes: number;
  /** The intent of the form that carries the file, on a page with several forms. */
  intent?: string;
  /** The form has no other field, so an error that names no field is the file's too. */
  onlyField?: boolean;
}

/**
 * A multipart form with one file, read within `upload.maxBytes`, then handled as `formAction` does; `run`
 * gets the file (null when none was sent) beside the parsed fields. A body that cannot be read, and a
 * UserError at the file field, are answered at the field, its label first.
 */
export async function uploadAction<S extends z.ZodType, T = undefined>(
  request: Request,
  upload: UploadField,
  schema: S,
  run: (value: z.output<S>, file: UploadedFile | null) => Promise<Done<T>>,
) {
  const atFile = (e: unknown, always: boolean) => {
    if (!(e instanceof UserError) || !(always || e.field === upload.name || (!e.field && upload.onlyField))) return e;
    const message = e.message.startsWith(`${upload.label}:`) ? e.message : `${upload.label}: ${e.message}`;
    return new UserError(message, { status: e.status, field: upload.name, retryAfterSeconds: e.retryAfterSeconds });
  };
  let read: Awaited<ReturnType<typeof readMultipart>>;
  try {
    read = await readMultipart(request, { fileField: upload.name, maxBytes: upload.maxBytes });
  } catch (e) {
    const nothingRead = parseSubmission(new URLSearchParams(), z.object({}));
    return failed<T>(upload.intent ?? null, nothingRead, atFile(e, true));
  }
  return formAction<S, T>(read.form, schema, async (value) => {
    try {
      return await run(value, read.file);
    } catch (e) {
      throw atFile(e, false);
    }
  });
}

/**
 * A UserError as a JSON response `{ error, field?, fields? }` with its status (`fields` maps the field to
 * the message, the shape an API body's schema errors have): returned by API routes, thrown by loaders (the
 * error boundary shows `error`). Anything else is rethrown.
 */
export function userErrorResponse(e: unknown): Response {
  if (!(e instanceof UserError)) throw e;
  const named = e.field ? { field: e.field, fields: { [e.field]: e.message } } : {};
  return Response.json({ error: e.message, ...named }, { status: e.status, headers: retryAfter(e) });
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
