import { and, asc, count, eq, sql } from "drizzle-orm";
import { alias } from "drizzle-orm/pg-core";
import { z } from "zod";
import { actionConfirmations, batches, correctiveActions, memberships, readings, sites, users, verifications } from "~db/schema";
import { text } from "~/lib/forms";
import { getI18n, languages, type Language } from "~/lib/i18n";
import { recordAudit } from "./audit.server";
import { db, type Tx } from "./db.server";
import { can, type Role } from "./guards.server";

/**
 * The words a signature stands for live in the locales as `verify.statementV<n>`. Changing them means
 * a new version and a new key: a signature keeps the exact words its signer saw, in their language.
 */
export const STATEMENT_VERSION = 1;
export const statementText = (lang: Language, version = STATEMENT_VERSION) => getI18n(lang).t(`verify.statementV${version}`);

export type VerificationStatus = "not-ended" | "awaiting" | "signed" | "changed-after-signing";

/**
 * Where a batch stands with its verification. A signature covers the record as it was: the number
 * of readings (corrections included) and corrective actions when it was signed. Both only grow, so a
 * batch whose counts moved past its latest signature has changed since.
 */
export function verificationStatus(batch: {
  state: string;
  readings: number;
  actions: number;
  latest: { readingsCovered: number; actionsCovered: number } | null;
}): VerificationStatus {
  if (batch.state === "cooling") return "not-ended";
  if (!batch.latest) return "awaiting";
  return batch.latest.readingsCovered === batch.readings && batch.latest.actionsCovered === batch.actions ? "signed" : "changed-after-signing";
}

/**
 * The same rule in SQL, for queues and digests: a batch waits for a signature when it has ended and
 * no verification covers every reading and corrective action it has now. As the counts only grow,
 * "covered by its latest verification" is "some verification has today's counts".
 *
 *   batches.state <> 'cooling' AND NOT EXISTS (
 *     SELECT 1 FROM verifications v WHERE v.batch_id = batches.id
 *       AND v.readings_covered = (SELECT count(*) FROM readings r WHERE r.batch_id = batches.id)
 *       AND v.actions_covered = (SELECT count(*) FROM corrective_actions c WHERE c.batch_id = batches.id))
 *
 * Use it in a `where` on a query from `batches`: `.where(and(eq(batches.siteId, id), awaitingVerification))`.
 */
export const awaitingVerification = sql`(${batches.state} <> 'cooling' AND NOT EXISTS (
  SELECT 1 FROM ${verifications} v WHERE v.batch_id = ${batches.id}
    AND v.readings_covered = (SELECT count(*) FROM ${readings} r WHERE r.batch_id = ${batches.id})
    AND v.actions_covered = (SELECT count(*) FROM ${correctiveActions} c WHERE c.batch_id = ${batches.id})))`;

const note = (key: string) => text(key).max(1000, key).optional().transform((s) => s || null);

export const SignSchema = z.object({
  intent: z.literal("sign"),
  agree: z.literal("true", { error: "verify.errors.agree" }),
  statementVersion: z.coerce.number().int(),
  language: z.enum(languages),
  comment: note("verify.errors.commentTooLong"),
});

export const ConfirmSchema = z.object({
  intent: z.literal("confirm"),
  actionId: z.uuid("verify.errors.unknownAction"),
  note: note("verify.errors.noteTooLong"),
});

export const VerificationActionSchema = z.discriminatedUnion("intent", [SignSchema, ConfirmSchema]);

type Site = typeof sites.$inferSelect;
type Signer = { id: string; role: Role };
export type VerificationOutcome<T> = { ok: true; value: T } | { ok: false; status: 403 | 404 | 409; errors: Record<string, string> };

const refuse = (status: 403 | 404 | 409, message: string) => ({ ok: false as const, status, errors: { form: message } });

/**
 * Four eyes: when the site does not allow self-verification and it has more than one active
 * manager (an administrator at the site does not count as a second one), nobody
 * signs a batch they made readings on or took a corrective action on, nor confirms an action they took. A kitchen with a
 * single manager has nobody else to ask, so the rule does not apply there.
 */
export async function selfVerificationBarred(site: Site, q: typeof db | Tx = db) {
  if (site.allowSelfVerification) return false;
  const [row] = await q
    .select({ n: count() })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.siteId, site.id), eq(memberships.role, "manager"), eq(users.active, true)));
  return (row?.n ?? 0) > 1;
}

/** Whether someone had a hand in a batch's record: entered one of its readings or took one of its corrective actions. */
async function madeEntries(q: typeof db | Tx, batchId: string, userId: string) {
  const [r] = await q.select({ id: readings.id }).from(readings).where(and(eq(readings.batchId, batchId), eq(readings.enteredBy, userId))).limit(1);
  if (r) return true;
  const [a] = await q.select({ id: correctiveActions.id }).from(correctiveActions).where(and(eq(correctiveActions.batchId, batchId), eq(correctiveActions.takenBy, userId))).limit(1);
  return !!a;
}

async function countsOf(q: typeof db | Tx, batchId: string) {
  const [[r], [a]] = await Promise.all([
    q.select({ n: count() }).from(readings).where(eq(readings.batchId, batchId)),
    q.select({ n: count() }).from(correctiveActions).where(eq(correctiveActions.batchId, batchId)),
  ]);
  return { readings: r.n, actions: a.n };
}

/** Locks the batch row for the rest of the transaction, so two signatures cannot cross. */
async function lockBatch(tx: Tx, site: Site, batchId: string) {
  const [b] = await tx
    .select({ id: batches.id, state: batches.state })
    .from(batches)
    .where(and(eq(batches.id, batchId), eq(batches.siteId, site.id)))
    .for("update");
  return b;
}

/** The signature of a manager on an ended batch: the signed-in user, the server's time and the words they agreed to. */
export async function signBatch(site: Site, signer: Signer, batchId: string, input: z.infer<typeof SignSchema>, now = Date.now()): Promise<VerificationOutcome<typeof verifications.$inferSelect>> {
  if (!can.verify.includes(signer.role)) return refuse(403, "verify.errors.notAllowed");
  if (input.statementVersion !== STATEMENT_VERSION) return refuse(409, "verify.errors.statementChanged");
  return db.transaction(async (tx) => {
    const batch = await lockBatch(tx, site, batchId);
    if (!batch) return refuse(404, "verify.errors.notFound");
    if (batch.state === "cooling") return refuse(409, "verify.errors.notEnded");
    const counts = await countsOf(tx, batchId);
    const [latest] = await tx.select().from(verifications).where(eq(verifications.batchId, batchId)).orderBy(sql`${verifications.signedAt} desc`).limit(1);
    if (verificationStatus({ state: batch.state, ...counts, latest: latest ?? null }) === "signed") return refuse(409, "verify.errors.alreadySigned");
    if (await selfVerificationBarred(site, tx)) {
      if (await madeEntries(tx, batchId, signer.id)) return refuse(403, "verify.errors.selfSign");
    }
    const [open] = await tx
      .select({ n: count() })
      .from(correctiveActions)
      .leftJoin(actionConfirmations, eq(actionConfirmations.correctiveActionId, correctiveActions.id))
      .where(and(eq(correctiveActions.batchId, batchId), sql`${actionConfirmations.id} IS NULL`));
    if (open.n > 0) return refuse(409, "verify.errors.unconfirmed");
    const statement = statementText(input.language);
    const [row] = await tx
      .insert(verifications)
      .values({
        batchId,
        siteId: site.id,
        signedBy: signer.id,
        signedAt: new Date(now),
        statement,
        statementVersion: STATEMENT_VERSION,
        comment: input.comment,
        readingsCovered: counts.readings,
        actionsCovered: counts.actions,
      })
      .returning();
    await recordAudit(tx, {
      actor: { kind: "user", userId: signer.id },
      organisationId: site.organisationId,
      siteId: site.id,
      action: "batch.verified",
      entity: "batch",
      entityId: batchId,
      data: { verificationId: row.id, statementVersion: STATEMENT_VERSION, language: input.language, readingsCovered: counts.readings, actionsCovered: counts.actions, again: !!latest },
    });
    return { ok: true as const, value: row };
  });
}

/** A manager confirms a corrective action someone took on the batch; once, with an optional note. */
export async function confirmAction(site: Site, signer: Signer, batchId: string, input: z.infer<typeof ConfirmSchema>, now = Date.now()): Promise<VerificationOutcome<typeof actionConfirmations.$inferSelect>> {
  if (!can.verify.includes(signer.role)) return refuse(403, "verify.errors.notAllowed");
  return db.transaction(async (tx) => {
    if (!(await lockBatch(tx, site, batchId))) return refuse(404, "verify.errors.notFound");
    const [action] = await tx
      .select({ id: correctiveActions.id, takenBy: correctiveActions.takenBy, kind: correctiveActions.kind })
      .from(correctiveActions)
      .where(and(eq(correctiveActions.id, input.actionId), eq(correctiveActions.batchId, batchId), eq(correctiveActions.siteId, site.id)));
    if (!action) return refuse(404, "verify.errors.unknownAction");
    if (action.takenBy === signer.id && (await selfVerificationBarred(site, tx))) return refuse(403, "verify.errors.selfConfirm");
    const [row] = await tx
      .insert(actionConfirmations)
      .values({ correctiveActionId: action.id, batchId, siteId: site.id, confirmedBy: signer.id, confirmedAt: new Date(now), note: input.note })
      .onConflictDoNothing()
      .returning();
    if (!row) return refuse(409, "verify.errors.alreadyConfirmed");
    await recordAudit(tx, {
      actor: { kind: "user", userId: signer.id },
      organisationId: site.organisationId,
      siteId: site.id,
      action: "corrective_action.confirmed",
      entity: "corrective_action",
      entityId: action.id,
      data: { batchId, confirmationId: row.id, kind: action.kind, note: input.note },
    });
    return { ok: true as const, value: row };
  });
}

const takers = alias(users, "takers");
const confirmers = alias(users, "confirmers");

/**
 * What the batch page shows about the review of a batch, for one viewer: its corrective actions with
 * their confirmations, its signatures, where it stands and what the viewer may do.
 */
export async function loadVerification(site: Site, batch: { id: string; state: string }, viewer: Signer) {
  const [actions, signatures, counts, barred, mine] = await Promise.all([
    db
      .select({ action: correctiveActions, takenBy: takers.name, confirmation: actionConfirmations, confirmedBy: confirmers.name })
      .from(correctiveActions)
      .leftJoin(takers, eq(takers.id, correctiveActions.takenBy))
      .leftJoin(actionConfirmations, eq(actionConfirmations.correctiveActionId, correctiveActions.id))
      .leftJoin(confirmers, eq(confirmers.id, actionConfirmations.confirmedBy))
      .where(and(eq(correctiveActions.batchId, batch.id), eq(correctiveActions.siteId, site.id)))
      .orderBy(asc(correctiveActions.takenAt)),
    db
      .select({ v: verifications, signedBy: users.name })
      .from(verifications)
      .innerJoin(users, eq(users.id, verifications.signedBy))
      .where(and(eq(verifications.batchId, batch.id), eq(verifications.siteId, site.id)))
      .orderBy(asc(verifications.signedAt)),
    countsOf(db, batch.id),
    selfVerificationBarred(site),
    madeEntries(db, batch.id, viewer.id).then((mine) => (mine ? [{ id: viewer.id }] : [])),
  ]);
  const latest = signatures.at(-1)?.v ?? null;
  const status = verificationStatus({ state: batch.state, ...counts, latest });
  const mayVerify = can.verify.includes(viewer.role);
  const unconfirmed = actions.filter((a) => !a.confirmation).length;
  return {
    status,
    firstSignedAt: signatures[0]?.v.signedAt.getTime() ?? null,
    actions: actions.map(({ action, takenBy, confirmation, confirmedBy }) => ({
      id: action.id,
      kind: action.kind,
      detail: action.detail,
      takenBy: takenBy ?? "—",
      takenAt: action.takenAt.getTime(),
      confirmation: confirmation ? { by: confirmedBy ?? "—", at: confirmation.confirmedAt.getTime(), note: confirmation.note } : null,
      // What the viewer may do about it: confirm, or not because they took it themselves.
      canConfirm: mayVerify && !confirmation && !(barred && action.takenBy === viewer.id),
      ownAction: mayVerify && !confirmation && barred && action.takenBy === viewer.id,
    })),
    signatures: signatures.map(({ v, signedBy }) => ({
      id: v.id,
      signedBy,
      signedAt: v.signedAt.getTime(),
      statement: v.statement,
      comment: v.comment,
      readingsCovered: v.readingsCovered,
      actionsCovered: v.actionsCovered,
    })),
    // Why the signing form is not offered, if it is not.
    signing: !mayVerify
      ? ("not-allowed" as const)
      : status === "not-ended"
        ? ("not-ended" as const)
        : status === "signed"
          ? ("signed" as const)
          : barred && mine.length
            ? ("own-entries" as const)
            : unconfirmed
              ? ("unconfirmed" as const)
              : ("ready" as const),
    unconfirmed,
    entriesSince: latest ? { readings: counts.readings - latest.readingsCovered, actions: counts.actions - latest.actionsCovered } : null,
  };
}
