import { z } from "zod";

// Table state lives in the URL (sort, dir, page, size, q) so every table sorts, filters and pages on the server.
export const tableQuerySchema = z.object({
  sort: z.string().max(40).optional(),
  dir: z.enum(["asc", "desc"]).default("asc"),
  page: z.coerce.number().int().min(1).default(1),
  size: z.coerce.number().int().min(5).max(200).default(25),
  q: z.string().trim().max(200).optional(),
});
export type TableQuery = z.infer<typeof tableQuerySchema>;

export function readTableQuery(url: URL, extra: string[] = []): TableQuery & { filters: Record<string, string> } {
  const raw = Object.fromEntries(url.searchParams.entries());
  const parsed = tableQuerySchema.safeParse(raw);
  const base = parsed.success ? parsed.data : tableQuerySchema.parse({});
  const filters: Record<string, string> = {};
  for (const key of extra) {
    const v = url.searchParams.get(key);
    if (v) filters[key] = v.slice(0, 200);
  }
  return { ...base, filters };
}
