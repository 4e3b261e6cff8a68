import { randomUUID } from "node:crypto";
import { batches, correctiveActions, readings, verifications } from "~db/schema";
import { db, type newTenant } from "./db";

type Tenant = Awaited<ReturnType<typeof newTenant>>;
export const minutesAgo = (m: number) => new Date(Date.now() - m * 60_000);

/**
 * A batch written straight to the database with its derived columns set by hand, to build a review
 * scenario in one step (the app's own path fills them in the tests that go through the API).
 */
export async function insertBatch(t: Tenant, over: Partial<typeof batches.$inferInsert> = {}) {
  const [b] = await db
    .insert(batches)
    .values({
      siteId: t.site.id,
      clientId: randomUUID(),
      productId: t.product.id,
      lotCode: `L-${randomUUID().slice(0, 6)}`,
      panSize: "gn-1/1",
      panDepthMm: 100,
      fillDepthMm: 75,
      method: "walk-in",
      ruleSetCode: t.site.ruleSetCode,
      startedAt: minutesAgo(60),
      verdict: "ahead",
      assessedAt: new Date(),
      nextReadingDueAt: minutesAgo(-20),
      ...over,
    })
    .returning();
  await addReading(t, b.id, 150, minutesAgo(60));
  return b;
}

export async function addReading(t: Tenant, batchId: string, valueF: number, takenAt = new Date()) {
  await db.insert(readings).values({ batchId, siteId: t.site.id, clientId: randomUUID(), valueEntered: valueF, unitEntered: "F", valueC: ((valueF - 32) * 5) / 9, takenAt, late: false, source: "api" });
}

export async function addAction(t: Tenant, batchId: string) {
  const [a] = await db.insert(correctiveActions).values({ batchId, siteId: t.site.id, clientId: randomUUID(), kind: "change_method", takenAt: new Date() }).returning();
  return a;
}

export async function sign(t: Tenant, batchId: string, covered: { readings: number; actions: number }) {
  await db.insert(verifications).values({ batchId, siteId: t.site.id, signedBy: t.people.manager.id, statement: "Checked.", statementVersion: 1, readingsCovered: covered.readings, actionsCovered: covered.actions });
}
