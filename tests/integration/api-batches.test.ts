import { randomUUID } from "node:crypto";
import { eq, sql } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { batches, equipment, products, readings } from "~db/schema";
import { Client, signedIn } from "../helpers/client";
import { db, newTenant } from "../helpers/db";

type Tenant = Awaited<ReturnType<typeof newTenant>>;
const minutesAgo = (m: number) => new Date(Date.now() - m * 60_000).toISOString();

const startBody = (t: Tenant, over: Record<string, unknown> = {}) => ({
  clientId: randomUUID(),
  productId: t.product.id,
  lotCode: "L-0412",
  pan: { size: "gn-1/1", depthMm: 100, count: 2, fillDepthMm: 75 },
  method: "walk-in",
  equipmentId: t.walkIn.id,
  start: { value: 150, unit: "F", takenAt: minutesAgo(5) },
  ...over,
});

async function cookOf(t: Tenant) {
  return signedIn(t.people.cook.email, t.people.cook.password);
}

async function started(t: Tenant, c: Client, over: Record<string, unknown> = {}) {
  const res = await c.request("/api/v1/batches", { json: startBody(t, over) });
  expect(res.status).toBe(201);
  return (await res.json()) as { batch: { id: string }; prediction: { verdict: string }; record: { outcome: string } };
}

describe("batches API", () => {
  it("a cook starts a batch; the same client id sent twice makes one batch, and the answer carries the prediction", async () => {
    const t = await newTenant();
    const cook = await cookOf(t);
    const body = startBody(t);
    const first = await cook.request("/api/v1/batches", { json: body });
    expect(first.status).toBe(201);
    const json = await first.json();
    expect(["ahead", "tight", "behind"]).toContain(json.prediction.verdict);
    expect(json.prediction.caution).toMatch(/probe reading is the record/);
    expect(json.record.outcome).toBe("in-progress");
    const again = await cook.request("/api/v1/batches", { json: body });
    expect(again.status).toBe(200);
    expect((await again.json()).batch.id).toBe(json.batch.id);
    const rows = await db.select().from(batches).where(eq(batches.siteId, t.site.id));
    expect(rows).toHaveLength(1);
    // The batch keeps the recipe as it was: a later edit of the product does not rewrite its record.
    expect(rows[0].composition).toEqual(t.product.composition);
    await db.update(products).set({ composition: { water: 50, protein: 50 } }).where(eq(products.id, t.product.id));
    const [kept] = await db.select().from(batches).where(eq(batches.id, json.batch.id));
    expect(kept.composition).toEqual(t.product.composition);
    // The start reading is stored as entered and in °C.
    const [start] = await db.select().from(readings).where(eq(readings.batchId, json.batch.id));
    expect(start).toMatchObject({ valueEntered: 150, unitEntered: "F", enteredBy: t.people.cook.id, source: "web" });
    expect(start.valueC).toBeCloseTo(65.56, 2);
  });

  it("a start already below the upper limit is accepted with a warning and marked as not captured", async () => {
    const t = await newTenant();
    const res = await (await cookOf(t)).request("/api/v1/batches", { json: startBody(t, { start: { value: 120, unit: "F" } }) });
    expect(res.status).toBe(201);
    const json = await res.json();
    expect(json.warnings).toContain("startBelowUpperLimit");
    expect(json.batch.startNotCaptured).toBe(true);
  });

  it("bad starts get a message per field and store nothing", async () => {
    const t = await newTenant();
    const cook = await cookOf(t);
    const res = await cook.request("/api/v1/batches", {
      json: startBody(t, { lotCode: "", pan: { size: "gn-1/1", depthMm: 65, fillDepthMm: 90 }, method: "freezer", start: { value: 400, unit: "F" } }),
    });
    expect(res.status).toBe(400);
    const { errors } = await res.json();
    expect(errors.lotCode).toBe("Enter the lot or batch code");
    expect(errors.method).toBe("unknown cooling method");
    expect(Object.keys(errors).some((k) => k.startsWith("pan."))).toBe(true);
    const temp = await cook.request("/api/v1/batches", { json: startBody(t, { start: { value: 400, unit: "F" } }) });
    expect((await temp.json()).errors["start.value"]).toBe("A core temperature is between −22 °F and 230 °F");
    const other = await newTenant();
    const foreign = await cook.request("/api/v1/batches", { json: startBody(t, { productId: other.product.id }) });
    expect((await foreign.json()).errors.productId).toBe("unknown product");
    expect(await db.select().from(batches).where(eq(batches.siteId, t.site.id))).toHaveLength(0);
  });

  it("a reading sent twice with one client id is stored once", async () => {
    const t = await newTenant();
    const cook = await cookOf(t);
    const { batch } = await started(t, cook);
    const reading = { clientId: randomUUID(), value: 128, unit: "F" };
    const a = await cook.request(`/api/v1/batches/${batch.id}/readings`, { json: reading });
    expect(a.status).toBe(201);
    const b = await cook.request(`/api/v1/batches/${batch.id}/readings`, { json: reading });
    expect(b.status).toBe(200);
    expect((await b.json()).duplicate).toBe(true);
    const rows = await db.select().from(readings).where(eq(readings.batchId, batch.id));
    expect(rows.filter((r) => r.clientId === reading.clientId)).toHaveLength(1);
  });

  it("the database refuses UPDATE and DELETE on readings", async () => {
    const t = await newTenant();
    const { batch } = await started(t, await cookOf(t));
    const refused = { cause: { message: expect.stringMatching(/readings is append-only/) } };
    await expect(db.execute(sql`update readings set value_c = 1 where batch_id = ${batch.id}`)).rejects.toMatchObject(refused);
    await expect(db.execute(sql`delete from readings where batch_id = ${batch.id}`)).rejects.toMatchObject(refused);
    expect(await db.select().from(readings).where(eq(readings.batchId, batch.id))).toHaveLength(1);
  });

  it("a reading entered more than 15 minutes after it was taken is marked late; a rise gets a warning, not a block", async () => {
    const t = await newTenant();
    const cook = await cookOf(t);
    const { batch } = await started(t, cook, { start: { value: 150, unit: "F", takenAt: minutesAgo(60) } });
    const late = await cook.request(`/api/v1/batches/${batch.id}/readings`, { json: { clientId: randomUUID(), value: 120, unit: "F", takenAt: minutesAgo(20) } });
    expect(late.status).toBe(201);
    expect((await late.json()).reading.late).toBe(true);
    const onTime = await cook.request(`/api/v1/batches/${batch.id}/readings`, { json: { clientId: randomUUID(), value: 131, unit: "F" } });
    const j = await onTime.json();
    expect(j.reading.late).toBe(false);
    expect(j.warnings).toContain("risingTemperature");
  });

  it("bad readings get a message on the field and store nothing", async () => {
    const t = await newTenant();
    const cook = await cookOf(t);
    const { batch } = await started(t, cook, { start: { value: 150, unit: "F", takenAt: minutesAgo(30) } });
    const cases: [Record<string, unknown>, string, string][] = [
      [{ value: 300, unit: "F" }, "value", "A core temperature is between −22 °F and 230 °F"],
      [{ value: 50, unit: "K" }, "unit", 'unit must be "F" or "C"'],
      [{ value: 120, unit: "F", takenAt: new Date(Date.now() + 3_600_000).toISOString() }, "takenAt", "The time cannot be in the future"],
      [{ value: 120, unit: "F", takenAt: minutesAgo(45) }, "takenAt", "The time cannot be before the batch began"],
    ];
    for (const [body, field, message] of cases) {
      const res = await cook.request(`/api/v1/batches/${batch.id}/readings`, { json: { clientId: randomUUID(), ...body } });
      expect(res.status, field).toBe(400);
      expect((await res.json()).errors[field]).toBe(message);
    }
    expect(await db.select().from(readings).where(eq(readings.batchId, batch.id))).toHaveLength(1);
  });

  it("a correction is a new entry naming the one it corrects; the original stays as it was", async () => {
    const t = await newTenant();
    const cook = await cookOf(t);
    const { batch } = await started(t, cook);
    const wrong = await (await cook.request(`/api/v1/batches/${batch.id}/readings`, { json: { clientId: randomUUID(), value: 12, unit: "F" } })).json();
    const fix = await cook.request(`/api/v1/batches/${batch.id}/readings`, {
      json: { clientId: randomUUID(), value: 120, unit: "F", takenAt: wrong.reading.takenAt, corrects: { readingId: wrong.reading.id, reason: "typed 12 for 120" } },
    });
    expect(fix.status).toBe(201);
    // The mistyped 12 °F had ended the batch; the correction puts it back to cooling.
    const [after] = await db.select().from(batches).where(eq(batches.id, batch.id));
    expect(after.state).toBe("cooling");
    const rows = await db.select().from(readings).where(eq(readings.batchId, batch.id));
    expect(rows).toHaveLength(3);
    expect(rows.find((r) => r.id === wrong.reading.id)!.valueEntered).toBe(12);
    expect(rows.find((r) => r.correctsReadingId === wrong.reading.id)).toMatchObject({ valueEntered: 120, correctionReason: "typed 12 for 120" });
    const noReason = await cook.request(`/api/v1/batches/${batch.id}/readings`, { json: { clientId: randomUUID(), value: 120, unit: "F", corrects: { readingId: wrong.reading.id, reason: "" } } });
    expect((await noReason.json()).errors["corrects.reason"]).toBe("Say why this corrects the reading");
  });

  it("readings that meet both stages end the batch as cooled", async () => {
    const t = await newTenant();
    const cook = await cookOf(t);
    const { batch } = await started(t, cook, { start: { value: 140, unit: "F", takenAt: minutesAgo(300) } });
    for (const [v, ago] of [
      [100, 240],
      [70, 200],
      [50, 120],
      [41, 60],
    ] as const) {
      const res = await cook.request(`/api/v1/batches/${batch.id}/readings`, { json: { clientId: randomUUID(), value: v, unit: "F", takenAt: minutesAgo(ago) } });
      expect(res.status).toBe(201);
    }
    const [row] = await db.select().from(batches).where(eq(batches.id, batch.id));
    expect(row.state).toBe("cooled");
    // The walk-in learned from it: one batch, a finite surface factor that the next batch uses as its prior.
    const [walkIn] = await db.select().from(equipment).where(eq(equipment.id, t.walkIn.id));
    expect(walkIn.learnedBatches).toBe(1);
    expect(Number.isFinite(walkIn.learnedLnS)).toBe(true);
    expect(walkIn.learnedSd!).toBeGreaterThan(0);
    const after = await cook.request(`/api/v1/batches/${batch.id}/readings`, { json: { clientId: randomUUID(), value: 40, unit: "F" } });
    expect(after.status).toBe(409);
  });

  it("GET ?status=active lists the caller's active batches with their prediction", async () => {
    const t = await newTenant();
    const cook = await cookOf(t);
    const { batch } = await started(t, cook);
    const res = await cook.get("/api/v1/batches?status=active");
    expect(res.status).toBe(200);
    const { batches: list } = await res.json();
    expect(list.map((b: { id: string }) => b.id)).toEqual([batch.id]);
    expect(list[0].prediction.stages).toHaveLength(2);
    expect(list[0].prediction.whatIfs.length).toBeGreaterThan(0);
    expect((await cook.get("/api/v1/batches?status=all")).status).toBe(400);
  });

  it("the active list reuses an assessment only while the record stands still: a new reading shows at once", async () => {
    const t = await newTenant();
    const cook = await cookOf(t);
    const { batch } = await started(t, cook);
    type Listed = { id: string; record: { stages: { status: string; metBy: string | null }[] } };
    const listed = async () => ((await (await cook.get("/api/v1/batches?status=active")).json()) as { batches: Listed[] }).batches.find((b) => b.id === batch.id)!;
    expect((await listed()).record.stages[0].status).not.toBe("met");
    // Read again: this one may be the reused assessment.
    expect((await listed()).record.stages[0].status).not.toBe("met");
    // A reading the app did not settle itself (straight into the table): the next list already counts it.
    const [r] = await db
      .insert(readings)
      .values({ batchId: batch.id, siteId: t.site.id, clientId: randomUUID(), valueEntered: 65, unitEntered: "F", valueC: ((65 - 32) * 5) / 9, takenAt: new Date(), late: false, source: "api" })
      .returning();
    expect((await listed()).record.stages[0]).toMatchObject({ status: "met", metBy: r.id });
  });

  it("the active list reads a batch's row again once it, its product or its equipment is written", async () => {
    const t = await newTenant();
    const cook = await cookOf(t);
    const { batch } = await started(t, cook);
    const other = await started(t, cook, { lotCode: "L-0413" });
    type Listed = { id: string; product: string; prediction: { stages: { reachAt: string | null }[] } };
    const list = async () => ((await (await cook.get("/api/v1/batches?status=active")).json()) as { batches: Listed[] }).batches;
    const mine = async () => (await list()).find((b) => b.id === batch.id)!;
    // Read twice before each change, so the rows are kept, and twice after: the kept ones must not answer.
    for (let i = 0; i < 2; i++) expect((await mine()).product).toBe(t.product.name);
    await db.update(products).set({ name: "Braised lentils, renamed" }).where(eq(products.id, t.product.id));
    for (let i = 0; i < 2; i++) expect((await mine()).product).toBe("Braised lentils, renamed");
    // The equipment's learned factor is part of the prior: a new one gives another prediction.
    const reach = async () => (await mine()).prediction.stages.map((s) => s.reachAt);
    const before = await reach();
    expect(before[0]).not.toBeNull();
    await db.update(equipment).set({ learnedLnS: Math.log(3), learnedSd: 0.05, learnedBatches: 12 }).where(eq(equipment.id, t.walkIn.id));
    for (let i = 0; i < 2; i++) expect(Date.parse((await reach())[0]!)).toBeLessThan(Date.parse(before[0]!) - 10 * 60_000);
    // The batch itself: ended by another process (straight into the table), it leaves the list.
    await db.update(batches).set({ state: "discarded", endedAt: new Date() }).where(eq(batches.id, batch.id));
    for (let i = 0; i < 2; i++) expect((await list()).map((b) => b.id)).toEqual([other.batch.id]);
  });

  it("a site API token logs for its own site only; QA cannot log; another organisation sees 404", async () => {
    const t = await newTenant();
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    const html = await (await manager.post(`/sites/${t.site.id}/api-tokens`, { intent: "create", name: "gateway" })).text();
    const token = /data-testid="new-token">(cw_[A-Za-z0-9_-]+)</.exec(html)![1];
    const gateway = new Client();
    gateway.origin = null;
    const auth = { authorization: `Bearer ${token}` };
    const start = await gateway.request("/api/v1/batches", { json: startBody(t), headers: auth });
    expect(start.status).toBe(201);
    const { batch } = await start.json();
    const r = await gateway.request(`/api/v1/batches/${batch.id}/readings`, { json: { clientId: randomUUID(), value: 130, unit: "F" }, headers: auth });
    expect(r.status).toBe(201);
    const [row] = await db.select().from(readings).where(eq(readings.clientId, (await r.json()).reading.clientId));
    expect(row).toMatchObject({ source: "api", enteredBy: null });
    expect(row.apiTokenId).not.toBeNull();

    const qa = await signedIn(t.people.qa.email, t.people.qa.password);
    expect((await qa.request(`/api/v1/batches/${batch.id}/readings`, { json: { clientId: randomUUID(), value: 120, unit: "F" } })).status).toBe(403);
    expect((await qa.request("/api/v1/batches", { json: startBody(t) })).status).toBe(403);

    const other = await newTenant();
    const intruder = await signedIn(other.people.admin.email, other.people.admin.password);
    expect((await intruder.request(`/api/v1/batches/${batch.id}/readings`, { json: { clientId: randomUUID(), value: 120, unit: "F" } })).status).toBe(404);
    expect((await intruder.request("/api/v1/batches", { json: { ...startBody(t), siteId: t.site.id } })).status).toBe(404);
    const list = await (await intruder.get("/api/v1/batches?status=active")).json();
    expect(list.batches).toEqual([]);
  });
});

describe("corrective actions", () => {
  it("a missed stage asks for a reheat; a reheat to 74 °C restarts the clock once; a second miss leaves discard", async () => {
    const t = await newTenant();
    const cook = await cookOf(t);
    // Started 5 h ago at 150 °F; at 2.5 h it was still 80 °F: stage 1 (70 °F within 2 h) missed.
    const { batch } = await started(t, cook, { start: { value: 150, unit: "F", takenAt: minutesAgo(300) } });
    const miss = await (await cook.request(`/api/v1/batches/${batch.id}/readings`, { json: { clientId: randomUUID(), value: 80, unit: "F", takenAt: minutesAgo(150) } })).json();
    expect(miss.record.nextStep).toBe("reheat");
    // FDA Food Code §3-403.11: reheat to 165 °F.
    const reheat = await (await cook.request(`/api/v1/batches/${batch.id}/readings`, { json: { clientId: randomUUID(), value: 166, unit: "F", kind: "reheat", takenAt: minutesAgo(120) } })).json();
    expect(reheat.record.outcome).toBe("in-progress");
    expect(reheat.record.nextStep).toBeNull();
    const again = await (await cook.request(`/api/v1/batches/${batch.id}/readings`, { json: { clientId: randomUUID(), value: 90, unit: "F", takenAt: minutesAgo(5) } })).json();
    expect(again.record.nextStep).toBe("discard");
    const discard = await cook.request(`/api/v1/batches/${batch.id}/actions`, { json: { kind: "discard", clientId: randomUUID(), quantityKg: 12, reason: "missed twice" } });
    expect(discard.status).toBe(201);
    const [row] = await db.select().from(batches).where(eq(batches.id, batch.id));
    expect(row.state).toBe("discarded");
    expect((await cook.request(`/api/v1/batches/${batch.id}/readings`, { json: { clientId: randomUUID(), value: 40, unit: "F" } })).status).toBe(409);
  });

  it("moving the batch to an ice bath is recorded once, and the prediction restarts from there", async () => {
    const t = await newTenant();
    const cook = await cookOf(t);
    const { batch } = await started(t, cook, { start: { value: 150, unit: "F", takenAt: minutesAgo(40) } });
    await cook.request(`/api/v1/batches/${batch.id}/readings`, { json: { clientId: randomUUID(), value: 140, unit: "F", takenAt: minutesAgo(10) } });
    const before = await (await cook.get("/api/v1/batches?status=active")).json();
    const action = { kind: "change_method", clientId: randomUUID(), method: "ice-bath-stirred" };
    const res = await cook.request(`/api/v1/batches/${batch.id}/actions`, { json: action });
    expect(res.status).toBe(201);
    expect((await cook.request(`/api/v1/batches/${batch.id}/actions`, { json: action })).status).toBe(200);
    const { correctiveActions } = await import("~db/schema");
    const rows = await db.select().from(correctiveActions).where(eq(correctiveActions.batchId, batch.id));
    expect(rows).toHaveLength(1);
    expect(rows[0]).toMatchObject({ kind: "change_method", takenBy: t.people.cook.id });
    const [b] = await db.select().from(batches).where(eq(batches.id, batch.id));
    expect(b.method).toBe("ice-bath-stirred");
    const after = await (await cook.get("/api/v1/batches?status=active")).json();
    const t1 = Date.parse(before.batches[0].prediction.stages[0].reachAt);
    const t2 = Date.parse(after.batches[0].prediction.stages[0].reachAt);
    expect(t2).toBeLessThan(t1);
    await expect(db.execute(sql`delete from corrective_actions where batch_id = ${batch.id}`)).rejects.toMatchObject({ cause: { message: expect.stringMatching(/append-only/) } });
  });
});
