import { randomUUID } from "node:crypto";
import { and, eq, sql } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { actionConfirmations, auditEvents, correctiveActions, batches, readings, sites, verifications } from "~db/schema";
import { addMembership, createUser } from "~db/factories";
import { type Client, location, signedIn } from "../helpers/client";
import { db, newTenant, tag } from "../helpers/db";

type Tenant = Awaited<ReturnType<typeof newTenant>>;
const ago = (min: number) => new Date(Date.now() - min * 60_000).toISOString();
const sign = (extra: Record<string, string> = {}) => ({ intent: "sign", agree: "true", statementVersion: "1", language: "en", comment: "", ...extra });

/** A batch cooled through both FDA stages by `by` (the cook unless told), with a move to an ice bath on the way when asked. */
async function cooledBatch(t: Tenant, opts: { by?: Client; action?: boolean; end?: boolean } = {}) {
  const by = opts.by ?? (await signedIn(t.people.cook.email, t.people.cook.password));
  const res = await by.request("/api/v1/batches", {
    json: { clientId: randomUUID(), productId: t.product.id, lotCode: "VF-1", pan: { size: "gn-1/1", depthMm: 100, fillDepthMm: 75 }, method: "walk-in", start: { value: 150, unit: "F", takenAt: ago(150) } },
  });
  expect(res.status).toBe(201);
  const id = (await res.json()).batch.id as string;
  const reading = (value: number, takenAt?: string) => by.request(`/api/v1/batches/${id}/readings`, { json: { clientId: randomUUID(), value, unit: "F", takenAt } });
  expect((await reading(100, ago(100))).status).toBe(201);
  expect((await reading(68, ago(60))).status).toBe(201);
  if (opts.action) {
    const a = await by.request(`/api/v1/batches/${id}/actions`, { json: { kind: "change_method", clientId: randomUUID(), method: "ice-bath-stirred" } });
    expect(a.status).toBe(201);
  }
  if (opts.end !== false) expect((await reading(40)).status).toBe(201);
  const [b] = await db.select({ state: batches.state }).from(batches).where(eq(batches.id, id));
  expect(b.state).toBe(opts.end === false ? "cooling" : "cooled");
  return id;
}

const page = (t: Tenant, id: string) => `/sites/${t.site.id}/batches/${id}`;
const actionOf = async (batchId: string) => (await db.select({ id: correctiveActions.id }).from(correctiveActions).where(eq(correctiveActions.batchId, batchId)))[0].id;
const signaturesOf = (id: string) => db.select().from(verifications).where(eq(verifications.batchId, id));

async function secondManager(t: Tenant) {
  const email = `manager2.${tag()}@tenant.example`;
  const u = await createUser(db, { organisationId: t.org.id, name: "Second Manager", email, password: "a-long-test-password" });
  await addMembership(db, u.id, t.site.id, "manager");
  return { id: u.id, email, password: "a-long-test-password" };
}

describe("who may see and sign a batch record", () => {
  it("QA reads the batch page but neither QA nor a cook can sign; a cook cannot even read it", async () => {
    const t = await newTenant();
    const id = await cooledBatch(t);
    const qa = await signedIn(t.people.qa.email, t.people.qa.password);
    const view = await qa.get(page(t, id));
    expect(view.status).toBe(200);
    const html = await view.text();
    expect(html).toContain("Only a manager or an administrator of this site signs batch records.");
    expect(html).toContain("Predictions are guidance.");
    expect(html).not.toContain('name="agree"');
    expect((await qa.post(page(t, id), sign())).status).toBe(403);
    const cook = await signedIn(t.people.cook.email, t.people.cook.password);
    expect((await cook.get(page(t, id))).status).toBe(403);
    expect((await cook.post(page(t, id), sign())).status).toBe(403);
    expect(await signaturesOf(id)).toHaveLength(0);
  });

  it("a batch of another organisation, an unknown batch and a malformed id are 404", async () => {
    const t = await newTenant();
    const id = await cooledBatch(t);
    const other = await newTenant();
    const manager = await signedIn(other.people.manager.email, other.people.manager.password);
    // The other manager's own site with this batch's id, and this site itself.
    expect((await manager.get(`/sites/${other.site.id}/batches/${id}`)).status).toBe(404);
    expect((await manager.post(`/sites/${other.site.id}/batches/${id}`, sign())).status).toBe(404);
    expect((await manager.get(page(t, id))).status).toBe(404);
    const mine = await signedIn(t.people.manager.email, t.people.manager.password);
    expect((await mine.get(`/sites/${t.site.id}/batches/${randomUUID()}`)).status).toBe(404);
    expect((await mine.get(`/sites/${t.site.id}/batches/not-a-uuid`)).status).toBe(404);
    expect(await signaturesOf(id)).toHaveLength(0);
  });
});

describe("signing a batch record", () => {
  it("a manager signs an ended batch: the row keeps the words, the signer, the server time and the comment", async () => {
    const t = await newTenant();
    const id = await cooledBatch(t);
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    const before = await (await manager.get(page(t, id))).text();
    expect(before).toContain("Waiting for a signature");
    expect(before).toContain("I have reviewed this batch&#x27;s cooling record");
    const from = Date.now();
    const res = await manager.post(page(t, id), sign({ comment: "Probe checked against ice water." }));
    expect(res.status).toBe(302);
    expect(location(res)).toBe(`${page(t, id)}?done=signed`);
    const [row] = await signaturesOf(id);
    expect(row).toMatchObject({ signedBy: t.people.manager.id, siteId: t.site.id, statementVersion: 1, comment: "Probe checked against ice water.", readingsCovered: 4, actionsCovered: 0 });
    expect(row.statement).toMatch(/^I have reviewed this batch's cooling record: .+complete and true\.$/);
    expect(row.signedAt.getTime()).toBeGreaterThanOrEqual(from - 1000);
    expect(row.signedAt.getTime()).toBeLessThanOrEqual(Date.now() + 1000);
    const audit = await db.select().from(auditEvents).where(and(eq(auditEvents.action, "batch.verified"), eq(auditEvents.entityId, id)));
    expect(audit).toHaveLength(1);
    expect(audit[0].actorUserId).toBe(t.people.manager.id);
    const after = await (await manager.get(page(t, id))).text();
    expect(after).toContain("Signed by manager");
    expect(after).toContain("Probe checked against ice water.");
    // Nothing changed: a second signature is refused and no row is added.
    expect((await manager.post(page(t, id), sign())).status).toBe(409);
    expect(await signaturesOf(id)).toHaveLength(1);
  });

  it("the words are stored in the language the signer read them in", async () => {
    const t = await newTenant();
    const id = await cooledBatch(t);
    const admin = await signedIn(t.people.admin.email, t.people.admin.password);
    expect((await admin.post(page(t, id), sign({ language: "es" }))).status).toBe(302);
    const [row] = await signaturesOf(id);
    expect(row.statement).toMatch(/^He revisado el registro de enfriamiento de este lote/);
  });

  it("a batch still cooling cannot be signed", async () => {
    const t = await newTenant();
    const id = await cooledBatch(t, { end: false });
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    expect(await (await manager.get(page(t, id))).text()).toContain("This batch is still cooling.");
    const res = await manager.post(page(t, id), sign());
    expect(res.status).toBe(409);
    expect(await res.text()).toContain("only a batch that has ended can be signed");
    expect(await signaturesOf(id)).toHaveLength(0);
  });

  it("two signatures sent at once make one row", async () => {
    const t = await newTenant();
    const id = await cooledBatch(t);
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    const answers = await Promise.all([manager.post(page(t, id), sign()), manager.post(page(t, id), sign()), manager.post(page(t, id), sign())]);
    expect(answers.map((r) => r.status).sort()).toEqual([302, 409, 409]);
    expect(await signaturesOf(id)).toHaveLength(1);
  });

  it("bad input gets a message on its field and writes nothing", async () => {
    const t = await newTenant();
    const id = await cooledBatch(t);
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    const res = await manager.post(page(t, id), sign({ agree: "", comment: "x".repeat(1001) }));
    expect(res.status).toBe(400);
    const html = await res.text();
    expect(html).toContain("A comment has at most 1000 characters.");
    expect(html).toContain("Tick the box to agree with the statement before signing.");
    // An out-of-date statement is refused too.
    const stale = await manager.post(page(t, id), sign({ statementVersion: "0" }));
    expect(stale.status).toBe(409);
    expect(await stale.text()).toContain("The statement has changed since the page was opened.");
    expect(await signaturesOf(id)).toHaveLength(0);
    expect(await db.select().from(auditEvents).where(and(eq(auditEvents.action, "batch.verified"), eq(auditEvents.entityId, id)))).toHaveLength(0);
  });
});

describe("corrective actions", () => {
  it("an unconfirmed action blocks the signature until a manager confirms it, once, with a note", async () => {
    const t = await newTenant();
    const id = await cooledBatch(t, { action: true });
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    const html = await (await manager.get(page(t, id))).text();
    expect(html).toContain("Moved from “Walk-in cooler, still air” to “Ice-water bath, food stirred”");
    expect(html).toContain("Taken by cook");
    expect(html).toContain("Confirm the corrective action below first");
    const refused = await manager.post(page(t, id), sign());
    expect(refused.status).toBe(409);
    expect(await refused.text()).toContain("Confirm every corrective action before signing.");
    expect(await signaturesOf(id)).toHaveLength(0);

    const actionId = /name="actionId" value="([^"]+)"/.exec(html)![1];
    const tooLong = await manager.post(page(t, id), { intent: "confirm", actionId, note: "n".repeat(1001) });
    expect(tooLong.status).toBe(400);
    expect(await tooLong.text()).toContain("A note has at most 1000 characters.");
    expect(await db.select().from(actionConfirmations).where(eq(actionConfirmations.batchId, id))).toHaveLength(0);

    const qa = await signedIn(t.people.qa.email, t.people.qa.password);
    expect((await qa.post(page(t, id), { intent: "confirm", actionId, note: "" })).status).toBe(403);

    expect((await manager.post(page(t, id), { intent: "confirm", actionId, note: "Ice bath was ready in time." })).status).toBe(302);
    expect((await manager.post(page(t, id), { intent: "confirm", actionId, note: "" })).status).toBe(409);
    const confirmations = await db.select().from(actionConfirmations).where(eq(actionConfirmations.batchId, id));
    expect(confirmations).toHaveLength(1);
    expect(confirmations[0]).toMatchObject({ correctiveActionId: actionId, confirmedBy: t.people.manager.id, note: "Ice bath was ready in time." });
    expect(await db.select().from(auditEvents).where(and(eq(auditEvents.action, "corrective_action.confirmed"), eq(auditEvents.entityId, actionId)))).toHaveLength(1);
    expect(await (await manager.get(page(t, id))).text()).toContain("Confirmed by manager");

    expect((await manager.post(page(t, id), sign())).status).toBe(302);
    expect((await signaturesOf(id))[0]).toMatchObject({ readingsCovered: 4, actionsCovered: 1 });
  });

  it("an action of another batch cannot be confirmed through this one", async () => {
    const t = await newTenant();
    const a = await cooledBatch(t, { action: true });
    const b = await cooledBatch(t);
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    const actionId = /name="actionId" value="([^"]+)"/.exec(await (await manager.get(page(t, a))).text())![1];
    expect((await manager.post(page(t, b), { intent: "confirm", actionId, note: "" })).status).toBe(404);
    expect(await db.select().from(actionConfirmations).where(eq(actionConfirmations.correctiveActionId, actionId))).toHaveLength(0);
  });
});

describe("no self-verification", () => {
  it("with two managers, a manager who made entries neither signs nor confirms their own action; the other manager does", async () => {
    const t = await newTenant();
    const other = await secondManager(t);
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    const id = await cooledBatch(t, { by: manager, action: true });
    const html = await (await manager.get(page(t, id))).text();
    expect(html).toContain("You made entries on this batch, and this site has other managers");
    expect(html).toContain("You took this action yourself; another manager confirms it.");
    expect(html).not.toContain('name="agree"');
    const actionId = await actionOf(id);
    const own = await manager.post(page(t, id), { intent: "confirm", actionId, note: "" });
    expect(own.status).toBe(403);
    expect(await own.text()).toContain("You took this corrective action: another manager of this site confirms it.");
    expect((await manager.post(page(t, id), sign())).status).toBe(403);

    const second = await signedIn(other.email, other.password);
    expect((await second.post(page(t, id), { intent: "confirm", actionId, note: "" })).status).toBe(302);
    expect((await second.post(page(t, id), sign())).status).toBe(302);
    expect((await signaturesOf(id))[0].signedBy).toBe(other.id);
  });

  it("with one manager the same person may sign, and with the site setting on too", async () => {
    const t = await newTenant();
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    const alone = await cooledBatch(t, { by: manager, action: true });
    const actionId = await actionOf(alone);
    expect((await manager.post(page(t, alone), { intent: "confirm", actionId, note: "" })).status).toBe(302);
    expect((await manager.post(page(t, alone), sign())).status).toBe(302);

    await secondManager(t);
    const barred = await cooledBatch(t, { by: manager });
    expect((await manager.post(page(t, barred), sign())).status).toBe(403);
    await db.update(sites).set({ allowSelfVerification: true }).where(eq(sites.id, t.site.id));
    expect((await manager.post(page(t, barred), sign())).status).toBe(302);
    expect(await signaturesOf(barred)).toHaveLength(1);
  });

  it("with two managers, one who only took a corrective action (no readings) does not sign the record", async () => {
    const t = await newTenant();
    const other = await secondManager(t);
    const cook = await signedIn(t.people.cook.email, t.people.cook.password);
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    const id = await cooledBatch(t, { end: false });
    const moved = await manager.request(`/api/v1/batches/${id}/actions`, { json: { kind: "change_method", clientId: randomUUID(), method: "ice-bath-stirred" } });
    expect(moved.status).toBe(201);
    expect((await cook.request(`/api/v1/batches/${id}/readings`, { json: { clientId: randomUUID(), value: 40, unit: "F" } })).status).toBe(201);
    const second = await signedIn(other.email, other.password);
    expect((await second.post(page(t, id), { intent: "confirm", actionId: await actionOf(id), note: "" })).status).toBe(302);
    expect((await manager.post(page(t, id), sign())).status).toBe(403);
    expect(await signaturesOf(id)).toHaveLength(0);
    expect((await second.post(page(t, id), sign())).status).toBe(302);
  });

  it("an inactive second manager does not count", async () => {
    const t = await newTenant();
    const other = await secondManager(t);
    await db.execute(sql`update users set active = false where id = ${other.id}`);
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    const id = await cooledBatch(t, { by: manager });
    expect((await manager.post(page(t, id), sign())).status).toBe(302);
  });
});

describe("a signed record does not change", () => {
  it("a correction after signing shows after the signature and the batch can be signed again; the first signature stays", async () => {
    const t = await newTenant();
    const cook = await signedIn(t.people.cook.email, t.people.cook.password);
    const id = await cooledBatch(t, { by: cook });
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    expect((await manager.post(page(t, id), sign({ comment: "First look." }))).status).toBe(302);
    const [first] = await signaturesOf(id);

    const [last] = await db.select().from(readings).where(eq(readings.batchId, id)).orderBy(sql`${readings.takenAt} desc`).limit(1);
    const fix = await cook.request(`/api/v1/batches/${id}/readings`, { json: { clientId: randomUUID(), value: 39, unit: "F", takenAt: last.takenAt.toISOString(), corrects: { readingId: last.id, reason: "Read the wrong probe" } } });
    expect(fix.status).toBe(201);

    const html = await (await manager.get(page(t, id))).text();
    expect(html).toContain("Changed after signing");
    expect(html).toContain("after signing");
    expect(html).toContain("Entries made after the last signature: 1 reading(s)");
    expect(html).toContain("Sign the corrected record");
    expect((await manager.post(page(t, id), sign({ comment: "Correction seen." }))).status).toBe(302);
    const rows = await db.select().from(verifications).where(eq(verifications.batchId, id)).orderBy(verifications.signedAt);
    expect(rows).toHaveLength(2);
    expect(rows[0]).toEqual(first);
    expect(rows[1]).toMatchObject({ readingsCovered: 5, comment: "Correction seen." });
    expect(await (await manager.get(page(t, id))).text()).toContain("Signed</span>");
  });

  it("the database refuses UPDATE and DELETE of signatures and confirmations, even from the app's own user", async () => {
    const t = await newTenant();
    const id = await cooledBatch(t, { action: true });
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    const actionId = await actionOf(id);
    expect((await manager.post(page(t, id), { intent: "confirm", actionId, note: "ok" })).status).toBe(302);
    expect((await manager.post(page(t, id), sign())).status).toBe(302);
    await expect(db.execute(sql`update verifications set comment = 'changed' where batch_id = ${id}`)).rejects.toThrow();
    await expect(db.execute(sql`delete from verifications where batch_id = ${id}`)).rejects.toThrow();
    await expect(db.execute(sql`update action_confirmations set note = 'changed' where batch_id = ${id}`)).rejects.toThrow();
    await expect(db.execute(sql`delete from action_confirmations where batch_id = ${id}`)).rejects.toThrow();
    expect(await signaturesOf(id)).toHaveLength(1);
    expect((await db.select().from(actionConfirmations).where(eq(actionConfirmations.batchId, id)))[0].note).toBe("ok");
  });
});
