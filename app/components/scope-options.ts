import type { DepartmentRow, SiteRow } from "~/models/sites.server";

export function siteOptions(sites: SiteRow[], withNone = true) {
  return [
    ...(withNone ? [{ value: "", label: "— none —" }] : []),
    ...sites.map((s) => ({ value: String(s.id), label: s.name })),
  ];
}

export function departmentOptions(depts: DepartmentRow[]) {
  return [
    { value: "", label: "— none —" },
    ...depts.map((d) => ({ value: String(d.id), label: `${d.siteName} · ${d.name}` })),
  ];
}
