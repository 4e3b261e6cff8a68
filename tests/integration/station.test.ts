import { and, eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { auditEvents, users } from "~db/schema";
import { Client, location, signedIn } from "../helpers/client";
import { db, newTenant } from "../helpers/db";

async function setUpStation(tenant: Awaited<ReturnType<typeof newTenant>>) {
  const manager = await signedIn(tenant.people.manager.email, tenant.people.manager.password);
  const res = await manager.post(`/sites/${tenant.site.id}/station-setup`, { intent: "create", name: "Line 1 tablet" });
  expect(location(res)).toBe("/station");
  expect(manager.cookies.has("cw_station")).toBe(true);
  // The manager is signed out on the shared device.
  expect(await manager.signedInUser()).toBeNull();
  return manager;
}

describe("station devices and PINs", () => {
  it("a manager makes a device a station; cooks pick their name and their PIN attributes the entry", async () => {
    const tenant = await newTenant();
    const station = await setUpStation(tenant);
    const page = await (await station.get("/station")).text();
    expect(page).toContain("Who is logging?");
    expect(page).toContain(`cook ${tenant.org.slug.replace("tenant-", "")}`);
    const res = await station.post("/station", { intent: "pin", userId: tenant.people.cook.id, pin: tenant.people.cook.pin });
    expect(location(res)).toBe("/station");
    expect(await (await station.get("/station")).text()).toContain(`Logging as cook`);
  });

  it("a PIN locks after five wrong entries, refuses the right PIN, and a manager's reset unlocks it", async () => {
    const tenant = await newTenant();
    const station = await setUpStation(tenant);
    const cook = tenant.people.cook;
    for (let i = 1; i <= 4; i++) {
      const res = await station.post("/station", { intent: "pin", userId: cook.id, pin: "0000" });
      expect(res.status).toBe(400);
      expect(await res.text()).toContain(`Wrong PIN. ${5 - i} tries left`);
    }
    const fifth = await station.post("/station", { intent: "pin", userId: cook.id, pin: "0000" });
    expect(await fifth.text()).toContain("This PIN is locked");
    const right = await station.post("/station", { intent: "pin", userId: cook.id, pin: cook.pin });
    expect(right.status).toBe(400);
    expect(await right.text()).toContain("This PIN is locked");
    const [locked] = await db.select().from(users).where(eq(users.id, cook.id));
    expect(locked.pinLockedAt).not.toBeNull();
    const events = await db.select().from(auditEvents).where(and(eq(auditEvents.entityId, cook.id), eq(auditEvents.action, "user.pin_locked")));
    expect(events).toHaveLength(1);

    const manager = await signedIn(tenant.people.manager.email, tenant.people.manager.password);
    const reset = await manager.post(`/sites/${tenant.site.id}/team`, { intent: "setPin", userId: cook.id, pin: "97531" });
    expect(reset.status).toBe(200);
    expect(location(await station.post("/station", { intent: "pin", userId: cook.id, pin: "97531" }))).toBe("/station");
  });

  it("parallel wrong PINs cannot get more than five tries", async () => {
    const tenant = await newTenant();
    const station = await setUpStation(tenant);
    const results = await Promise.all(Array.from({ length: 10 }, (_, i) => station.post("/station", { intent: "pin", userId: tenant.people.cook.id, pin: String(1000 + i) })));
    const texts = await Promise.all(results.map((r) => r.text()));
    expect(texts.filter((t) => t.includes("Wrong PIN")).length).toBeLessThanOrEqual(4);
    const [row] = await db.select().from(users).where(eq(users.id, tenant.people.cook.id));
    expect(row.pinLockedAt).not.toBeNull();
    expect(row.pinFailedAttempts).toBe(5);
  });

  it("a PIN must be 4 to 6 digits; a bad one changes nothing", async () => {
    const tenant = await newTenant();
    const manager = await signedIn(tenant.people.manager.email, tenant.people.manager.password);
    const res = await manager.post(`/sites/${tenant.site.id}/team`, { intent: "setPin", userId: tenant.people.cook.id, pin: "12a" });
    expect(res.status).toBe(400);
    expect(await res.text()).toContain("A PIN is 4 to 6 digits.");
  });

  it("a person of another site cannot use this station", async () => {
    const tenant = await newTenant();
    const other = await newTenant();
    const station = await setUpStation(tenant);
    const res = await station.post("/station", { intent: "pin", userId: other.people.cook.id, pin: other.people.cook.pin });
    expect(res.status).toBe(404);
  });

  it("a retired station stops working", async () => {
    const tenant = await newTenant();
    const station = await setUpStation(tenant);
    const oldToken = station.cookies.get("cw_station")!;
    const res = await station.post("/station", { intent: "retire", userId: tenant.people.manager.id, pin: tenant.people.manager.pin });
    expect(location(res)).toBe("/signin");
    const cookie = station.cookieHeader();
    expect(cookie).not.toContain("cw_station=");
    expect(await (await station.get("/station")).text()).toContain("This device is not a station.");
    // A copy of the retired device's cookie is refused too.
    const copy = new Client();
    copy.cookies.set("cw_station", oldToken);
    expect(await (await copy.get("/station")).text()).toContain("This device is not a station.");
    expect((await copy.post("/station", { intent: "pin", userId: tenant.people.cook.id, pin: tenant.people.cook.pin })).status).toBe(401);
  });

  it("a cook cannot retire a station", async () => {
    const tenant = await newTenant();
    const station = await setUpStation(tenant);
    const res = await station.post("/station", { intent: "retire", userId: tenant.people.cook.id, pin: tenant.people.cook.pin });
    expect(res.status).toBe(403);
    expect(await (await station.get("/station")).text()).toContain("Who is logging?");
  });

  it("without a station cookie the PIN endpoint refuses", async () => {
    const tenant = await newTenant();
    const res = await new Client().post("/station", { intent: "pin", userId: tenant.people.cook.id, pin: tenant.people.cook.pin });
    expect(res.status).toBe(401);
  });
});
