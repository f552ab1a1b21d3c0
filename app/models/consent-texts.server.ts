import { nowInstant } from "~/dates";
import { db } from "~/db.server";
import type { ConsentPurpose } from "~/domain/consent-purposes";
import { conflict } from "~/errors";

export async function listConsentTexts() {
  const rows = await db()("consent_text_versions as c")
    .leftJoin("users as u", "u.id", "c.created_by")
    .select(
      "c.id",
      "c.purpose",
      "c.version",
      "c.body",
      "c.effective_from",
      "c.created_at",
      "u.display_name as created_by",
    )
    .orderBy([
      { column: "c.purpose" },
      { column: "c.effective_from", order: "desc" },
      { column: "c.id", order: "desc" },
    ]);
  return rows;
}

export async function createConsentText(v: {
  purpose: ConsentPurpose;
  version: string;
  effectiveFrom: string;
  body: string;
  createdBy: number;
}) {
  return db().transaction(async (trx) => {
    if (await trx("consent_text_versions").where({ purpose: v.purpose, version: v.version }).first("id")) {
      throw conflict(
        `Version ${v.version} of the ${v.purpose} text already exists; texts are never edited, add a new version.`,
        "version",
      );
    }
    const [r] = await trx("consent_text_versions")
      .insert({
        purpose: v.purpose,
        version: v.version,
        body: v.body,
        effective_from: v.effectiveFrom,
        created_by: v.createdBy,
        created_at: nowInstant(),
      })
      .returning("id");
    return r.id;
  });
}
