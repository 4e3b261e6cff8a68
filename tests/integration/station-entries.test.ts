import { randomUUID } from "node:crypto";
import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { readings } from "~db/schema";
import { Client, location, signedIn } from "../helpers/client";
import { db, newTenant } from "../helpers/db";
import { cameraJpeg } from "../helpers/images";

type Tenant = Awaited<ReturnType<typeof newTenant>>;

async function stationWithCook(t: Tenant) {
  const station = await signedIn(t.people.manager.email, t.people.manager.password);
  await station.post(`/sites/${t.site.id}/station-setup`, { intent: "create", name: "Tablet" });
  expect(location(await station.post("/station", { intent: "pin", userId: t.people.cook.id, pin: t.people.cook.pin }))).toBe("/station");
  return { station, attribution: station.cookies.get("cw_station_cook")! };
}

async function batchOf(t: Tenant) {
  const cook = await signedIn(t.people.cook.email, t.people.cook.password);
  const res = await cook.request("/api/v1/batches", {
    json: { clientId: randomUUID(), productId: t.product.id, lotCode: "ST-1", pan: { size: "gn-1/1", depthMm: 100, fillDepthMm: 75 }, method: "walk-in", start: { value: 150, unit: "F" } },
  });
  return (await res.json()).batch.id as string;
}

describe("station entries sent from the tablet's outbox", () => {
  it("a reading carries the cook's attribution, is stored once, and says who made it", async () => {
    const t = await newTenant();
    const { station, attribution } = await stationWithCook(t);
    const batchId = await batchOf(t);
    const body = { clientId: randomUUID(), value: 140, takenAt: new Date().toISOString(), kind: "reading", attribution };
    const first = await station.request(`/station/batches/${batchId}/readings`, { json: body });
    expect(first.status).toBe(201);
    const again = await station.request(`/station/batches/${batchId}/readings`, { json: body });
    expect(again.status).toBe(200);
    expect((await again.json()).duplicate).toBe(true);
    const rows = await db.select().from(readings).where(eq(readings.clientId, body.clientId));
    expect(rows).toHaveLength(1);
    expect(rows[0]).toMatchObject({ enteredBy: t.people.cook.id, source: "station", unitEntered: "F" });
    expect(rows[0].stationDeviceId).not.toBeNull();
  });

  it("an entry made while the PIN was on is accepted after it expired (sent late from the outbox)", async () => {
    const t = await newTenant();
    const { station, attribution } = await stationWithCook(t);
    const batchId = await batchOf(t);
    // The cook is done and the cookie is gone; the saved entry still carries its attribution.
    await station.post("/station", { intent: "done" });
    expect(station.cookies.has("cw_station_cook")).toBe(false);
    const res = await station.request(`/station/batches/${batchId}/readings`, { json: { clientId: randomUUID(), value: 138, takenAt: new Date().toISOString(), attribution } });
    expect(res.status).toBe(201);
  });

  it("a forged or foreign attribution is refused and stores nothing", async () => {
    const t = await newTenant();
    const { station, attribution } = await stationWithCook(t);
    const batchId = await batchOf(t);
    const forged = attribution.replace(/\.[^.]+$/, ".AAAA");
    const res = await station.request(`/station/batches/${batchId}/readings`, { json: { clientId: randomUUID(), value: 138, enteredAt: new Date().toISOString(), attribution: forged } });
    expect(res.status).toBe(401);
    // Another tablet cannot use this one's attribution.
    const other = await stationWithCook(t);
    const foreign = await other.station.request(`/station/batches/${batchId}/readings`, { json: { clientId: randomUUID(), value: 138, enteredAt: new Date().toISOString(), attribution } });
    expect(foreign.status).toBe(401);
    // A tablet of another organisation cannot reach the batch.
    const o = await newTenant();
    const far = await stationWithCook(o);
    const none = await far.station.request(`/station/batches/${batchId}/readings`, { json: { clientId: randomUUID(), value: 138, enteredAt: new Date().toISOString(), attribution: far.attribution } });
    expect(none.status).toBe(404);
    expect((await db.select().from(readings).where(eq(readings.batchId, batchId))).length).toBe(1);
    // No station at all.
    expect((await new Client().request(`/station/batches/${batchId}/readings`, { json: { clientId: randomUUID(), value: 138, enteredAt: new Date().toISOString(), attribution } })).status).toBe(401);
  });

  it("a probe photo from the tablet is stored and shown to the tablet, and the reading links it", async () => {
    const t = await newTenant();
    const { station, attribution } = await stationWithCook(t);
    const batchId = await batchOf(t);
    const form = new FormData();
    form.set("photo", new Blob([new Uint8Array(await cameraJpeg())], { type: "image/jpeg" }), "probe.jpg");
    form.set("attribution", attribution);
    form.set("enteredAt", new Date().toISOString());
    const up = await station.request("/station/photos", { method: "POST", body: form });
    expect(up.status).toBe(201);
    const { id } = await up.json();
    const r = await station.request(`/station/batches/${batchId}/readings`, { json: { clientId: randomUUID(), value: 139, enteredAt: new Date().toISOString(), attribution, photoId: id } });
    expect(r.status).toBe(201);
    const img = await station.get(`/photos/${id}/thumb`);
    expect(img.status).toBe(200);
    expect(img.headers.get("content-type")).toBe("image/webp");
    expect((await new Client().get(`/photos/${id}`)).status).toBe(404);
  });
});

describe("station attribution limits", () => {
  it("an attribution cannot sign entries saved before the PIN was entered, nor with an unreadable time", async () => {
    const t = await newTenant();
    const { station, attribution } = await stationWithCook(t);
    const batchId = await batchOf(t);
    const hourAgo = new Date(Date.now() - 3600_000).toISOString();
    const early = await station.request(`/station/batches/${batchId}/readings`, { json: { clientId: randomUUID(), value: 140, takenAt: hourAgo, enteredAt: hourAgo, attribution } });
    expect(early.status).toBe(401);
    const junk = await station.request(`/station/batches/${batchId}/readings`, { json: { clientId: randomUUID(), value: 140, enteredAt: "whenever", attribution } });
    expect(junk.status).toBe(401);
    // A reading taken 20 minutes ago and entered now is fine (and marked late).
    const late = await station.request(`/station/batches/${batchId}/readings`, { json: { clientId: randomUUID(), value: 140, takenAt: new Date(Date.now() - 20 * 60_000).toISOString(), enteredAt: new Date().toISOString(), attribution } });
    expect(late.status).not.toBe(401);
  });

  it("QA cannot make entries on a station; a photo of another site cannot be attached", async () => {
    const t = await newTenant();
    const { station } = await stationWithCook(t);
    const qa = await station.post("/station", { intent: "pin", userId: t.people.qa.id, pin: t.people.qa.pin });
    expect(qa.status).toBe(404);
    const batchId = await batchOf(t);
    const cook = await signedIn(t.people.cook.email, t.people.cook.password);
    const res = await cook.request(`/api/v1/batches/${batchId}/readings`, { json: { clientId: randomUUID(), value: 140, unit: "F", photoId: randomUUID() } });
    expect(res.status).toBe(400);
    expect((await res.json()).errors.photoId).toBe("unknown photo");
  });
});
