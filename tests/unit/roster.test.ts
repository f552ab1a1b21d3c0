import { describe, expect, it } from "vitest";
import { guessMapping, mappingFromForm, type RosterSite, validateRoster } from "~/schemas/roster";

// Roster row checks (app/schemas/roster.ts): pure, no database. The expected outcomes are written out
// by hand from the roster rules (missing employee number, bad e-mail, unknown site or department,
// duplicates inside the file, rows numbered as a spreadsheet shows them with the header as row 1).
const SITES: RosterSite[] = [
  {
    id: 1,
    code: "NY",
    name: "North Yard",
    departments: [
      { id: 11, code: "CH", name: "Cable Harness" },
      { id: 12, code: "KT", name: "Kitting" },
    ],
  },
  { id: 2, code: "RS", name: "Riverside", departments: [{ id: 21, code: "CH", name: "Cable Harness" }] },
];
const HEADERS = ["Employee number", "First name", "Last name", "E-mail", "Site", "Department"];
const mapping = guessMapping(HEADERS);

describe("guessMapping", () => {
  it("maps common header spellings and leaves unknown ones unmapped", () => {
    expect(mapping).toEqual({ employeeNumber: 0, givenName: 1, familyName: 2, email: 3, site: 4, department: 5 });
    expect(guessMapping(["Staff ID", "Given name", "Surname", "Email address", "Site code", "Dept"])).toEqual({
      employeeNumber: 0,
      givenName: 1,
      familyName: 2,
      email: 3,
      site: 4,
      department: 5,
    });
    expect(guessMapping(["\uFEFFemp_no", "colour"])).toMatchObject({ employeeNumber: 0, givenName: null, site: null });
  });
});

describe("mappingFromForm", () => {
  it("names a required field without a column and a column mapped twice", () => {
    const r = mappingFromForm(
      {
        "map.employeeNumber": "0",
        "map.givenName": "1",
        "map.familyName": "1",
        "map.email": "",
        "map.site": "",
        "map.department": "9",
      },
      6,
    );
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.errors).toEqual({
      "map.familyName": "Family name: that column is already mapped to Given name",
      "map.site": "Site: choose the column that holds it",
      "map.department": "Department: no such column",
    });
  });
  it("accepts a complete mapping with e-mail left out", () => {
    const r = mappingFromForm(
      {
        "map.employeeNumber": "0",
        "map.givenName": "1",
        "map.familyName": "2",
        "map.email": "",
        "map.site": "4",
        "map.department": "5",
      },
      6,
    );
    expect(r).toEqual({
      ok: true,
      mapping: { employeeNumber: 0, givenName: 1, familyName: 2, email: null, site: 4, department: 5 },
    });
  });
});

describe("validateRoster", () => {
  const rows = [
    ["hv-1", " Ada ", "Birch", "ADA@Example.org", "NY", "Cable Harness"], // row 2: valid, normalised
    ["", "Bea", "Colby", "", "NY", "CH"], // row 3: missing employee number
    ["HV-3", "Cai", "Dunmore", "cai@", "north yard", "KT"], // row 4: bad e-mail
    ["HV-4", "Dara", "Ellery", "", "Westmoor", "CH"], // row 5: unknown site
    ["HV-5", "Eli", "Fenwick", "", "RS", "KT"], // row 6: Kitting is not at Riverside
    ["", "", "", "", "", ""], // row 7: blank line, ignored
    ["HV-6", "Fern", "Garland", "", "RS", "CH"], // row 8: duplicate (with row 9)
    ["hv-6", "Fern", "Garland", "", "RS", "CH"], // row 9
    ["HV-7", "", "Holt", "", "", "CH"], // row 10: two problems
  ];
  const v = validateRoster(rows, mapping, SITES, null);

  it("keeps only the valid rows, normalised", () => {
    expect(v.rowCount).toBe(8);
    expect(v.valid).toEqual([
      {
        row: 2,
        employeeNumber: "HV-1",
        givenName: "Ada",
        familyName: "Birch",
        email: "ada@example.org",
        siteId: 1,
        departmentId: 11,
      },
    ]);
    expect(v.invalidRows).toBe(7);
  });

  it("names every bad row with its field, in row order", () => {
    expect(v.issues).toEqual([
      { row: 3, field: "employeeNumber", message: "employee number is missing" },
      { row: 4, field: "email", message: "not a valid e-mail address" },
      { row: 5, field: "site", message: 'unknown site "Westmoor"; use a site code or name (NY, RS)' },
      { row: 6, field: "department", message: 'unknown department "KT" at Riverside' },
      { row: 8, field: "employeeNumber", message: "employee number HV-6 appears again later in the file" },
      { row: 9, field: "employeeNumber", message: "employee number HV-6 appears twice in the file (first on row 8)" },
      { row: 10, field: "givenName", message: "given name is missing" },
      { row: 10, field: "site", message: "site is missing" },
    ]);
  });

  it("refuses rows at sites outside the importer's scope", () => {
    const scoped = validateRoster(
      [
        ["HV-9", "Gus", "Irwin", "", "RS", "CH"],
        ["HV-10", "Hana", "Jessop", "", "NY", "KT"],
      ],
      mapping,
      SITES,
      new Set([1]),
    );
    expect(scoped.valid.map((r) => r.employeeNumber)).toEqual(["HV-10"]);
    expect(scoped.issues).toEqual([
      { row: 2, field: "site", message: 'site "Riverside" is outside the sites you may manage' },
    ]);
  });

  it("rejects employee numbers with spaces or symbols and over-long names", () => {
    const r = validateRoster([["HV 1", "A".repeat(121), "B", "", "NY", "CH"]], mapping, SITES, null);
    expect(r.issues.map((i) => i.field)).toEqual(["employeeNumber", "givenName"]);
    expect(r.issues[0].message).toBe("employee number may hold only letters, digits and . _ / -");
  });
});
