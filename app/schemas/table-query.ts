import { z } from "zod";
import { UserError } from "~/errors";

// Table state lives in the URL (sort, dir, page, size, q) so every table sorts, filters and pages on the server.
// A value the table cannot use is refused (400) with a message naming the parameter; the sort column itself is
// checked against the list's own columns in models/paging.server.ts.
const pageMessage = "Page: a whole number from 1.";
export const tableQuerySchema = z.object({
  sort: z.string().max(40, "Sort: not a column of this list.").optional(),
  dir: z.enum(["asc", "desc"], { message: "Dir: asc or desc." }).default("asc"),
  page: z.coerce
    .number({ message: pageMessage })
    .int(pageMessage)
    .min(1, pageMessage)
    .max(1_000_000, "Page: at most 1,000,000.")
    .default(1),
  size: z.coerce
    .number({ message: "Size: 5 to 200 rows per page." })
    .int("Size: 5 to 200 rows per page.")
    .min(5, "Size: 5 to 200 rows per page.")
    .max(200, "Size: 5 to 200 rows per page.")
    .default(25),
  q: z.string().trim().max(200, "Q: the search text is at most 200 characters.").optional(),
});
export type TableQuery = z.infer<typeof tableQuerySchema>;

/** A filter holding the id of a row (a site, a device type): digits only, within the database's integer range. */
export const idFilter = (label: string) => z.string().regex(/^[1-9]\d{0,8}$/, `${label}: not a known id.`);

/**
 * Reads the table parameters and the named filters (each with its schema; an empty value means "no filter").
 * Throws a UserError naming the parameter for a value it cannot use.
 */
export function readTableQuery(
  url: URL,
  filterSchemas: Record<string, z.ZodType<string>> = {},
): TableQuery & { filters: Record<string, string> } {
  const raw: Record<string, string> = {};
  for (const key of Object.keys(tableQuerySchema.shape)) {
    const v = url.searchParams.get(key);
    if (v !== null && v !== "") raw[key] = v;
  }
  const parsed = tableQuerySchema.safeParse(raw);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    throw new UserError(issue.message, { field: String(issue.path[0]) });
  }
  const filters: Record<string, string> = {};
  for (const [key, schema] of Object.entries(filterSchemas)) {
    const v = url.searchParams.get(key);
    if (!v) continue;
    const f = schema.safeParse(v);
    if (!f.success) throw new UserError(f.error.issues[0].message, { field: key });
    filters[key] = f.data;
  }
  return { ...parsed.data, filters };
}
