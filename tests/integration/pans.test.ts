import { randomUUID } from "node:crypto";
import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { batches, panTypes } from "~db/schema";
import { signedIn } from "../helpers/client";
import { db, newTenant } from "../helpers/db";

describe("a kitchen's own pans", () => {
  it("a manager adds a pan by its inside dimensions; cooks start batches in it and the engine uses its size", async () => {
    const t = await newTenant();
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    const res = await manager.post(`/sites/${t.site.id}/pans`, { intent: "add", name: "Deep roasting tray", lengthMm: "600", widthMm: "400", depthMm: "120", material: "aluminium" });
    expect(res.status).toBe(200);
    expect(await (await manager.get(`/sites/${t.site.id}/pans`)).text()).toContain("Deep roasting tray");
    const [pan] = await db.select().from(panTypes).where(eq(panTypes.siteId, t.site.id));
    expect(pan).toMatchObject({ lengthMm: 600, widthMm: 400, depthMm: 120, material: "aluminium", active: true });

    const cook = await signedIn(t.people.cook.email, t.people.cook.password);
    const body = (fill: number, size = `custom:${pan.id}`) => ({
      clientId: randomUUID(),
      productId: t.product.id,
      lotCode: "TRAY-1",
      pan: { size, depthMm: 120, fillDepthMm: fill },
      method: "walk-in",
      start: { value: 150, unit: "F" },
    });
    const start = await cook.request("/api/v1/batches", { json: body(80) });
    expect(start.status).toBe(201);
    const { batch, prediction } = await start.json();
    expect(prediction.stages).toHaveLength(2);
    const [row] = await db.select().from(batches).where(eq(batches.id, batch.id));
    expect(row).toMatchObject({ panLengthMm: 600, panWidthMm: 400, panDepthMm: 120, fillDepthMm: 80 });

    const tooFull = await cook.request("/api/v1/batches", { json: body(150) });
    expect(tooFull.status).toBe(400);
    expect((await tooFull.json()).errors["pan.fillDepthMm"]).toBe("Fill depth 150 mm is more than the pan's depth of 120 mm");
    const other = await newTenant();
    const foreign = await cook.request("/api/v1/batches", { json: body(50, `custom:${randomUUID()}`) });
    expect((await foreign.json()).errors["pan.size"]).toBe("unknown pan size");
    void other;

    // Retired pans are no longer offered, and the record of past batches keeps their size.
    expect((await manager.post(`/sites/${t.site.id}/pans`, { intent: "retire", panTypeId: pan.id })).status).toBe(200);
    expect((await cook.request("/api/v1/batches", { json: body(50) })).status).toBe(400);
  });

  it("bad dimensions get a message on the field and store nothing; cooks and QA cannot edit pans", async () => {
    const t = await newTenant();
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    const res = await manager.post(`/sites/${t.site.id}/pans`, { intent: "add", name: "", lengthMm: "5", widthMm: "300", depthMm: "9000", material: "stainless-steel" });
    expect(res.status).toBe(400);
    const html = await res.text();
    expect(html).toContain("Fill this in.");
    expect(html).toContain("Enter a whole number between 50 and 1200.");
    expect(html).toContain("Enter a whole number between 10 and 400.");
    expect(await db.select().from(panTypes).where(eq(panTypes.siteId, t.site.id))).toHaveLength(0);
    for (const role of ["cook", "qa"] as const) {
      const c = await signedIn(t.people[role].email, t.people[role].password);
      expect((await c.get(`/sites/${t.site.id}/pans`)).status).toBe(403);
    }
    const outsider = await newTenant();
    const admin = await signedIn(outsider.people.admin.email, outsider.people.admin.password);
    expect((await admin.get(`/sites/${t.site.id}/pans`)).status).toBe(404);
  });
});
