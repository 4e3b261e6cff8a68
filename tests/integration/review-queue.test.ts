import { randomUUID } from "node:crypto";
import { eq, inArray } from "drizzle-orm";
import { beforeAll, describe, expect, it } from "vitest";
import { actionConfirmations, batches } from "~db/schema";
import { createProduct } from "~db/factories";
import { addAction, addReading, afterSweep, coolingBatch, endedBatch, minutesAgo, sign } from "../helpers/batches";
import { Client, signedIn } from "../helpers/client";
import { db, newTenant } from "../helpers/db";

type Tenant = Awaited<ReturnType<typeof newTenant>>;
type Row = { id: string; reasons: string[]; text: string };

/** The queue's rows as the page shows them: batch id, reason badges, and the row's text. */
async function queue(c: Client, t: Tenant, search = "") {
  const res = await c.get(`/sites/${t.site.id}/review${search}`);
  const html = await res.text();
  const rows: Row[] = html
    .split('data-testid="queue-row"')
    .slice(1)
    .map((chunk) => chunk.slice(0, chunk.indexOf("</tr>")))
    .map((row) => ({
      id: new RegExp(`/sites/${t.site.id}/batches/([0-9a-f-]{36})`).exec(row)![1],
      reasons: [...row.matchAll(/data-reason="([a-z_]+)"/g)].map((m) => m[1]),
      text: row.replace(/<[^>]+>/g, " "),
    }));
  const summary = /data-testid="queue-summary">([^<]*(?:<!-- -->[^<]*)*)</.exec(html)?.[1].replace(/<!-- -->/g, "") ?? "";
  return { status: res.status, html, rows, ids: rows.map((r) => r.id), summary };
}

describe("review queue", () => {
  let t: Tenant;
  let manager: Client;
  const b: Record<string, string> = {};

  beforeAll(async () => {
    t = await newTenant();
    manager = await signedIn(t.people.manager.email, t.people.manager.password);
    const apple = await createProduct(db, { siteId: t.site.id, name: "Apple compote", composition: { water: 85, carbohydrate: 14, fibre: 1 } });
    // Each cooling batch's reason comes from the engine, on its pan, method and readings.
    b.offTrack = (await coolingBatch(t, { verdict: "behind", lotCode: "OT-1", startedMinutesAgo: 20 })).id;
    b.atRisk = (await coolingBatch(t, { verdict: "tight", lotCode: "AR-1", productId: apple.id })).id;
    // In two and a half hours still at 100 °F: stage 1 (70 °F within 2 h) is missed, and the forecast is bleak too.
    b.missed = (await coolingBatch(t, { verdict: "behind", lotCode: "MS-1", startedMinutesAgo: 150, readings: [[5, 100]] })).id;
    // A reading is due every 30 min, with 10 min of grace: 45 min since the last one is overdue, 35 is not yet.
    b.overdue = (await coolingBatch(t, { lotCode: "OD-1", startedMinutesAgo: 45 })).id;
    b.inGrace = (await coolingBatch(t, { lotCode: "GR-1", startedMinutesAgo: 35 })).id;
    b.toConfirm = (await coolingBatch(t, { lotCode: "AC-1" })).id;
    await addAction(t, b.toConfirm);
    b.confirmed = (await coolingBatch(t, { lotCode: "CF-1" })).id;
    const done = await addAction(t, b.confirmed);
    await db.insert(actionConfirmations).values({ correctiveActionId: done.id, batchId: b.confirmed, siteId: t.site.id, confirmedBy: t.people.manager.id });
    const ended = { state: "cooled" as const, endedAt: minutesAgo(10) };
    b.unsigned = (await endedBatch(t, { ...ended, lotCode: "UN-1", startedAt: minutesAgo(300), productId: apple.id })).id;
    b.signed = (await endedBatch(t, { ...ended, lotCode: "SG-1" })).id;
    await sign(t, b.signed, { readings: 1, actions: 0 });
    b.changed = (await endedBatch(t, { ...ended, lotCode: "CH-1", startedAt: minutesAgo(200) })).id;
    await sign(t, b.changed, { readings: 1, actions: 0 });
    await addReading(t, b.changed, 40);
    b.discarded = (await endedBatch(t, { state: "discarded", endedAt: minutesAgo(3), missedAt: minutesAgo(20), verdict: "behind", lotCode: "DC-1", startedAt: minutesAgo(250) })).id;
    b.quiet = (await coolingBatch(t, { lotCode: "QT-1" })).id;
    // Lot codes with LIKE's wildcards in them, waiting for a signature.
    b.percent = (await endedBatch(t, { ...ended, lotCode: "PCT%1" })).id;
    b.percentLookalike = (await endedBatch(t, { ...ended, lotCode: "PCTX1" })).id;
    b.underscore = (await endedBatch(t, { ...ended, lotCode: "U_2" })).id;
    b.underscoreLookalike = (await endedBatch(t, { ...ended, lotCode: "UX2" })).id;
    // What the tests read is what the alert sweep leaves, not only what was written here.
    await afterSweep(t);
  });

  it("each reason shows on the batch that has it and on no other; batches that need nothing are left out", async () => {
    const { status, rows } = await queue(manager, t, "?size=50");
    expect(status).toBe(200);
    const reasonsOf = (id: string) => rows.find((r) => r.id === id)?.reasons;
    expect(reasonsOf(b.offTrack)).toEqual(["off_track"]);
    expect(reasonsOf(b.atRisk)).toEqual(["at_risk"]);
    expect(reasonsOf(b.missed)).toEqual(["missed_stage"]);
    expect(reasonsOf(b.overdue)).toEqual(["reading_overdue"]);
    expect(reasonsOf(b.toConfirm)).toEqual(["action_to_confirm"]);
    expect(reasonsOf(b.unsigned)).toEqual(["awaiting_verification"]);
    expect(reasonsOf(b.changed)).toEqual(["changed_after_signing"]);
    expect(reasonsOf(b.discarded)).toEqual(["missed_stage", "awaiting_verification"]);
    for (const id of [b.inGrace, b.confirmed, b.signed, b.quiet]) expect(reasonsOf(id)).toBeUndefined();
    expect(rows).toHaveLength(12);
    // The engine forecasts a miss for the batch that has missed, but the record's miss is its one reason.
    const [missed] = await db.select().from(batches).where(eq(batches.id, b.missed));
    expect(missed.missedAt).not.toBeNull();
    expect(missed.verdict).toBe("behind");
  });

  it("sorts worst first by default, and by start, product or next reading due in either direction", async () => {
    const worst = (await queue(manager, t, "?size=50")).rows;
    expect(worst.slice(0, 2).map((r) => r.id).sort()).toEqual([b.missed, b.discarded].sort());
    expect(worst[2].id).toBe(b.offTrack);
    expect(worst[3].id).toBe(b.overdue);
    expect(worst[4].id).toBe(b.atRisk);
    const best = (await queue(manager, t, "?size=50&sort=severity&dir=asc")).rows;
    expect(best.at(-1)!.reasons[0]).toBe("missed_stage");

    const started = (await queue(manager, t, "?size=50&sort=started&dir=asc")).ids;
    expect(started[0]).toBe(b.unsigned); // started 300 min ago
    expect(started.indexOf(b.discarded)).toBe(1);
    const newest = (await queue(manager, t, "?size=50&sort=started")).ids;
    expect(newest.at(0)).toBe(started.at(-1));

    const product = (await queue(manager, t, "?size=50&sort=product")).rows;
    expect(product.slice(0, 2).map((r) => r.id).sort()).toEqual([b.atRisk, b.unsigned].sort());
    const productDesc = (await queue(manager, t, "?size=50&sort=product&dir=desc")).ids;
    expect(productDesc.slice(-2).sort()).toEqual([b.atRisk, b.unsigned].sort());

    // The most overdue first; ended batches, with nothing due, last either way.
    const due = (await queue(manager, t, "?size=50&sort=due")).ids;
    expect(due[0]).toBe(b.overdue);
    const cooling = [b.missed, b.offTrack, b.overdue, b.atRisk, b.toConfirm];
    const dueAt = await db.select({ id: batches.id, at: batches.nextReadingDueAt }).from(batches).where(inArray(batches.id, cooling));
    expect(due.slice(0, 5)).toEqual(dueAt.sort((x, y) => x.at!.getTime() - y.at!.getTime()).map((r) => r.id));
    const dueDesc = (await queue(manager, t, "?size=50&sort=due&dir=desc")).ids;
    const ended = [b.unsigned, b.changed, b.discarded, b.percent, b.percentLookalike, b.underscore, b.underscoreLookalike].sort();
    expect(due.slice(-7).sort()).toEqual(ended);
    expect(dueDesc.slice(-7).sort()).toEqual(ended);
    expect(dueDesc[4]).toBe(b.overdue);
  });

  it("the reason filter keeps only batches with that reason, and its chip counts them", async () => {
    const { ids, html } = await queue(manager, t, "?reason=awaiting_verification");
    expect(ids.sort()).toEqual([b.unsigned, b.discarded, b.percent, b.percentLookalike, b.underscore, b.underscoreLookalike].sort());
    expect(html).toMatch(/Waiting for a signature(<!-- -->)? \((<!-- -->)?6(<!-- -->)?\)/);
    expect((await queue(manager, t, "?reason=off_track")).ids).toEqual([b.offTrack]);
    expect((await queue(manager, t, "?reason=reading_overdue")).ids).toEqual([b.overdue]);
  });

  it("searches product names and lot codes, and takes % and _ literally", async () => {
    expect((await queue(manager, t, "?q=apple")).ids.sort()).toEqual([b.atRisk, b.unsigned].sort());
    expect((await queue(manager, t, "?q=ot-1")).ids).toEqual([b.offTrack]);
    expect((await queue(manager, t, `?q=${encodeURIComponent("T%1")}`)).ids).toEqual([b.percent]);
    expect((await queue(manager, t, `?q=${encodeURIComponent("U_2")}`)).ids).toEqual([b.underscore]);
    expect((await queue(manager, t, `?q=${encodeURIComponent("%")}`)).ids).toEqual([b.percent]);
    const none = await queue(manager, t, "?q=nothing-like-this");
    expect(none.rows).toHaveLength(0);
    expect(none.html).toContain("No batch matches this filter or search.");
  });

  it("pages through the queue with the total count", async () => {
    const first = await queue(manager, t, "?size=10");
    expect(first.rows).toHaveLength(10);
    expect(first.summary).toBe("12 batches · page 1 of 2");
    const second = await queue(manager, t, "?size=10&page=2");
    expect(second.rows).toHaveLength(2);
    expect(second.summary).toBe("12 batches · page 2 of 2");
    expect(new Set([...first.ids, ...second.ids]).size).toBe(12);
    // Past the end: the last page, and the page says so.
    const past = await queue(manager, t, "?size=10&page=9");
    expect(past.status).toBe(200);
    expect(past.ids).toEqual(second.ids);
    expect(past.html).toContain("There is no page 9; this is the last page.");
  });

  it("bad parameters fall back to the defaults and the page names them; never a server error", async () => {
    for (const search of ["?sort=price", "?dir=sideways", "?reason=late", "?page=-1", "?page=abc", "?size=7", `?q=${"x".repeat(200)}`, "?page=1e400"]) {
      const r = await queue(manager, t, search);
      expect(r.status, search).toBe(200);
      expect(r.html, search).toContain("Some of the address could not be used and was left out");
    }
    const r = await queue(manager, t, "?sort=price&size=7&reason=off_track");
    expect(r.html).toContain("sort order, page size (10, 25 or 50)");
    expect(r.ids).toEqual([b.offTrack]);
    expect(r.summary).toBe("1 batch · page 1 of 1");
  });

  it("QA can read the queue; a cook cannot; another organisation's site is not found", async () => {
    const qa = await signedIn(t.people.qa.email, t.people.qa.password);
    expect((await queue(qa, t)).status).toBe(200);
    const cook = await signedIn(t.people.cook.email, t.people.cook.password);
    expect((await cook.get(`/sites/${t.site.id}/review`)).status).toBe(403);
    const other = await newTenant();
    const stranger = await signedIn(other.people.manager.email, other.people.manager.password);
    expect((await stranger.get(`/sites/${t.site.id}/review`)).status).toBe(404);
    expect((await stranger.get(`/sites/not-a-uuid/review`)).status).toBe(404);
  });

  it("shows the forecast caution, and an empty queue says so plainly", async () => {
    expect((await queue(manager, t)).html).toContain("Predictions are guidance.");
    const fresh = await newTenant();
    const m = await signedIn(fresh.people.manager.email, fresh.people.manager.password);
    const empty = await queue(m, fresh);
    expect(empty.rows).toHaveLength(0);
    expect(empty.html).toContain("Nothing needs you right now");
  });

  it("a batch started through the API with a site token is assessed by the app and lands in the queue with its reason", async () => {
    const fresh = await newTenant();
    const m = await signedIn(fresh.people.manager.email, fresh.people.manager.password);
    const html = await (await m.post(`/sites/${fresh.site.id}/api-tokens`, { intent: "create", name: "probe gateway" })).text();
    const token = /data-testid="new-token">(cw_[A-Za-z0-9_-]+)</.exec(html)![1];
    const gateway = new Client();
    const api = (path: string, json: unknown) => gateway.request(path, { json, headers: { authorization: `Bearer ${token}` } });
    // Into the walk-in two and a half hours ago, and still 100 °F: the 2-hour stage is missed.
    const start = await api("/api/v1/batches", {
      clientId: randomUUID(),
      productId: fresh.product.id,
      lotCode: "API-1",
      pan: { size: "gn-1/1", depthMm: 100, count: 1, fillDepthMm: 75 },
      method: "walk-in",
      equipmentId: fresh.walkIn.id,
      start: { value: 150, unit: "F", takenAt: minutesAgo(150).toISOString() },
    });
    expect(start.status).toBe(201);
    const id = (await start.json()).batch.id as string;
    const reading = await api(`/api/v1/batches/${id}/readings`, { clientId: randomUUID(), value: 100, unit: "F" });
    expect(reading.status).toBe(201);
    const [row] = await db.select().from(batches).where(eq(batches.id, id));
    expect(row.verdict).not.toBeNull();
    expect(row.missedAt).not.toBeNull();
    expect(row.nextReadingDueAt!.getTime()).toBeGreaterThan(Date.now());
    const { rows } = await queue(m, fresh);
    expect(rows.map((r) => r.id)).toEqual([id]);
    expect(rows[0].reasons).toContain("missed_stage");
    expect(rows[0].text).toContain("API-1");
  });
});
