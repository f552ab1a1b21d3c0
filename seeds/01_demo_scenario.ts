import type { Knex } from "knex";
import { DEMO_PERSONAS } from "../app/auth/demo-personas";
import type { Role } from "../app/auth/permissions";
import type { TableInsert, TableRow } from "../app/db.server";
import { CONSENT_PURPOSES } from "../app/domain/consent-purposes";
import { mulberry32, pick } from "./lib/prng";
import { emptyAllTables } from "./lib/reset";

// ─────────────────────────────────────────────────────────────────────────────────────────────
// INVENTED DEMO DATA. "Harrow & Vale Fabrication", its sites, departments, people and devices are
// fictional. Names are drawn at random from generic first/last-name lists; any match with
// a real person is coincidence. Deterministic: seeded PRNG and fixed dates.
// ─────────────────────────────────────────────────────────────────────────────────────────────

export const SEED_NOW = "2026-11-30T09:00:00.000Z";

const DEMO_TIME_ZONE = "Europe/London";
const SITES = [
  { code: "NY", name: "North Yard" },
  { code: "RS", name: "Riverside" },
  { code: "EG", name: "Eastgate" },
];
const DEPARTMENTS = [
  { code: "CH", name: "Cable Harness" },
  { code: "FA", name: "Final Assembly" },
  { code: "KT", name: "Kitting" },
  { code: "IN", name: "Inspection" },
  { code: "PP", name: "Paint Prep" },
];
export const DEVICE_TYPES: {
  code: string;
  name: string;
  category: TableRow<"device_types">["category"];
  wear: number;
  maxh: number;
  description: string;
}[] = [
  {
    code: "SRF-FOOT",
    name: "Foot-driven supernumerary finger",
    category: "supernumerary_finger",
    wear: 60,
    maxh: 4,
    description:
      "Extra robotic finger worn on the hand, controlled by toe and foot movements through an insole sensor.",
  },
  {
    code: "SRA-WAIST",
    name: "Waist-mounted supernumerary arm",
    category: "supernumerary_arm",
    wear: 90,
    maxh: 5,
    description: "Light robotic arm mounted on a waist belt that holds parts or tools while both hands work.",
  },
  {
    code: "EXO-SHOULDER",
    name: "Shoulder-support exoskeleton",
    category: "exoskeleton",
    wear: 240,
    maxh: 8,
    description: "Passive spring exoskeleton that supports the arms during overhead work.",
  },
  {
    code: "EXO-BACK",
    name: "Back-support exoskeleton",
    category: "exoskeleton",
    wear: 240,
    maxh: 8,
    description: "Passive exoskeleton that assists the lower back during lifting and forward bending.",
  },
];
const FIRST = [
  "Alex",
  "Bea",
  "Cai",
  "Dara",
  "Eli",
  "Fern",
  "Gus",
  "Hana",
  "Ivo",
  "Jae",
  "Kit",
  "Lena",
  "Milo",
  "Nia",
  "Oren",
  "Pia",
  "Quin",
  "Rafe",
  "Sana",
  "Teo",
  "Uma",
  "Vic",
  "Wren",
  "Xan",
  "Yara",
  "Zed",
  "Arlo",
  "Bryn",
  "Cora",
  "Dev",
];
const LAST = [
  "Ashdown",
  "Birch",
  "Colby",
  "Dunmore",
  "Ellery",
  "Fenwick",
  "Garland",
  "Holt",
  "Irwin",
  "Jessop",
  "Kerrow",
  "Lowther",
  "Marlow",
  "Norris",
  "Oakes",
  "Penrose",
  "Quarry",
  "Rook",
  "Sallow",
  "Thorne",
  "Underhill",
  "Vance",
  "Wexley",
  "Yeoman",
  "Zeller",
];
const TRAINER_NAMES = [
  "Ines Calloway",
  "Bram Ketteridge",
  "Odile Farrant",
  "Joss Whitlam",
  "Maren Stroud",
  "Kofi Ansell",
  "Lise Darrow",
  "Hal Penhallow",
];

export async function seed(knex: Knex): Promise<void> {
  const rand = mulberry32(20261201);
  await knex.transaction(async (trx) => {
    await emptyAllTables(trx);
    const [org] = await trx("organisations")
      .insert({
        name: "Harrow & Vale Fabrication (invented)",
        disclosure_threshold: 5,
        retention_days: 3650,
        // The invented sites keep UK time (GMT in winter, BST in summer).
        time_zone: DEMO_TIME_ZONE,
        created_at: SEED_NOW,
      })
      .returning("id");
    const orgId = typeof org === "object" ? org.id : org;

    const siteIds: Record<string, number> = {};
    const deptIds: Record<string, number> = {};
    for (const s of SITES) {
      const [row] = await trx("sites")
        .insert({ organisation_id: orgId, code: s.code, name: s.name, time_zone: DEMO_TIME_ZONE, created_at: SEED_NOW })
        .returning("id");
      siteIds[s.code] = row.id;
      for (const d of DEPARTMENTS) {
        const [dr] = await trx("departments")
          .insert({ site_id: row.id, code: d.code, name: d.name, created_at: SEED_NOW })
          .returning("id");
        deptIds[`${s.code}-${d.code}`] = dr.id;
      }
    }

    // Staff personas and their scoped roles.
    const userIds: Record<string, number> = {};
    for (const p of DEMO_PERSONAS) {
      const [u] = await trx("users")
        .insert({ email: p.email, display_name: p.displayName, active: true, created_at: SEED_NOW })
        .returning("id");
      userIds[p.email] = u.id;
    }
    const assign = (email: string, role: Role, site?: string, dept?: string) =>
      trx("role_assignments").insert({
        user_id: userIds[email],
        role,
        created_at: SEED_NOW,
        site_id: site ? siteIds[site] : null,
        department_id: dept ? deptIds[`${site}-${dept}`] : null,
      });
    for (const s of SITES) {
      await assign("morwenna.pike@harrowvale.example", "assessor", s.code);
      await assign("rhea.lindqvist@harrowvale.example", "assessor", s.code);
      await assign("tobias.renn@harrowvale.example", "coordinator", s.code);
    }
    await assign("declan.hartley@harrowvale.example", "manager", "NY", "CH");
    await assign("declan.hartley@harrowvale.example", "manager", "NY", "FA");
    await assign("amara.quist@harrowvale.example", "worker", "NY", "CH");
    await assign("sam.okafor@harrowvale.example", "admin");

    // Consent text versions, one per purpose.
    const texts = {
      assessment:
        "I agree that an occupational therapist may record my baseline coordination assessment, including raw sensor traces, for fitting and training on wearable augmentation devices. I can withdraw at any time; my assessment data are then erased.",
      planning:
        "I agree that my forecast training hours may be used to plan who trains on which device, when and with whom. I can withdraw at any time; I am then removed from plans.",
      model:
        "I agree that a de-identified copy of my baseline and training outcome may join the cohort used to fit forecast models. I can withdraw at any time; my record then leaves future cohorts.",
    };
    const textIds: Record<string, number> = {};
    for (const purpose of CONSENT_PURPOSES) {
      const body = texts[purpose];
      const [r] = await trx("consent_text_versions")
        .insert({
          purpose,
          version: "1.0",
          body,
          effective_from: "2026-09-01",
          created_by: userIds["sam.okafor@harrowvale.example"],
          created_at: SEED_NOW,
        })
        .returning("id");
      textIds[purpose] = r.id;
    }

    // Devices: units per site, bookable hours per week.
    const deviceIds: Record<string, number> = {};
    for (const d of DEVICE_TYPES) {
      const [r] = await trx("device_types")
        .insert({
          code: d.code,
          name: d.name,
          category: d.category,
          description: d.description,
          wear_time_limit_minutes: d.wear,
          default_max_hours_per_week: d.maxh,
          created_at: SEED_NOW,
        })
        .returning("id");
      deviceIds[d.code] = r.id;
      for (const s of SITES) {
        const units = d.category === "exoskeleton" ? 3 : 2;
        for (let u = 1; u <= units; u++) {
          await trx("device_units").insert({
            device_type_id: r.id,
            site_id: siteIds[s.code],
            serial: `${d.code}-${s.code}-${String(u).padStart(2, "0")}`,
            status: u === units && d.code === "SRA-WAIST" && s.code === "EG" ? "maintenance" : "in_service",
            bookable_hours_per_week: d.category === "exoskeleton" ? 32 : 24,
            created_at: SEED_NOW,
          });
        }
      }
    }

    // Eight trainers; Ines Calloway is the trainer persona.
    for (let i = 0; i < TRAINER_NAMES.length; i++) {
      const name = TRAINER_NAMES[i];
      const email = `${name.toLowerCase().replace(/ /g, ".")}@harrowvale.example`;
      let uid = userIds[email];
      if (!uid) {
        const [u] = await trx("users")
          .insert({ email, display_name: name, active: true, created_at: SEED_NOW })
          .returning("id");
        uid = u.id;
      }
      const site = SITES[i % 3].code;
      await trx("role_assignments").insert({
        user_id: uid,
        role: "trainer",
        site_id: siteIds[site],
        created_at: SEED_NOW,
      });
      const [t] = await trx("trainers")
        .insert({
          user_id: uid,
          site_id: siteIds[site],
          trainees_per_session: 1 + (i % 3),
          hours_per_week: i % 4 === 3 ? 20 : 30,
          created_at: SEED_NOW,
        })
        .returning("id");
      const certs = [DEVICE_TYPES[i % 4].code, DEVICE_TYPES[(i + 1) % 4].code];
      for (const c of certs)
        await trx("trainer_certifications").insert({
          trainer_id: t.id,
          device_type_id: deviceIds[c],
          certified_on: "2026-06-15",
        });
    }

    // ~300 workers: 20 per department per site. Amara Quist (the worker persona) is HV-00001.
    let n = 0;
    const workers: TableInsert<"workers">[] = [];
    for (const s of SITES) {
      for (const d of DEPARTMENTS) {
        for (let k = 0; k < 20; k++) {
          n++;
          const isPersona = n === 1;
          const given = isPersona ? "Amara" : pick(rand, FIRST);
          const family = isPersona ? "Quist" : pick(rand, LAST);
          workers.push({
            employee_number: `HV-${String(n).padStart(5, "0")}`,
            given_name: given,
            family_name: family,
            email: isPersona
              ? "amara.quist@harrowvale.example"
              : `${given}.${family}.${n}@harrowvale.example`.toLowerCase(),
            site_id: siteIds[s.code],
            department_id: deptIds[`${s.code}-${d.code}`],
            user_id: isPersona ? userIds["amara.quist@harrowvale.example"] : null,
            stage: rand() < 0.7 || isPersona ? "consented" : "invited",
            created_at: SEED_NOW,
            updated_at: SEED_NOW,
          });
        }
      }
    }
    for (let i = 0; i < workers.length; i += 100) await trx("workers").insert(workers.slice(i, i + 100));

    // Consent for the consented workers: all three purposes, witnessed by the assessor persona.
    const consented = await trx("workers").where({ stage: "consented" }).select("id");
    const witness = userIds["morwenna.pike@harrowvale.example"];
    const rows = consented.flatMap((w: { id: number }) =>
      (["assessment", "planning", "model"] as const).map(
        (purpose): TableInsert<"consent_records"> => ({
          worker_id: w.id,
          purpose,
          text_version_id: textIds[purpose],
          status: "given",
          given_at: "2026-10-05T10:00:00.000Z",
          witness_user_id: witness,
          recorded_by: witness,
          created_at: "2026-10-05T10:00:00.000Z",
        }),
      ),
    );
    for (let i = 0; i < rows.length; i += 100) await trx("consent_records").insert(rows.slice(i, i + 100));
    const stageRows = consented.map(
      (w: { id: number }): TableInsert<"stage_changes"> => ({
        worker_id: w.id,
        from_stage: "invited",
        to_stage: "consented",
        actor_user_id: witness,
        at: "2026-10-05T10:00:00.000Z",
      }),
    );
    for (let i = 0; i < stageRows.length; i += 100) await trx("stage_changes").insert(stageRows.slice(i, i + 100));
  });
}
