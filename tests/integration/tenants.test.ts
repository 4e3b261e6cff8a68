import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { sites, users } from "~db/schema";
import { signedIn } from "../helpers/client";
import { db, newTenant } from "../helpers/db";

describe("tenant isolation", () => {
  it("an administrator of another organisation gets 404 for this organisation's site, pages and actions", async () => {
    const a = await newTenant();
    const b = await newTenant();
    const intruder = await signedIn(b.people.admin.email, b.people.admin.password);
    for (const path of ["", "/team", "/settings", "/station-setup"]) {
      expect((await intruder.get(`/sites/${a.site.id}${path}`)).status, path).toBe(404);
    }
    const settings = await intruder.post(`/sites/${a.site.id}/settings`, {
      name: "Hijacked",
      temperatureUnit: "C",
      timeZone: "UTC",
      ruleSetCode: "fda-3-501.14-a",
      readingIntervalMinutes: "30",
      overdueGraceMinutes: "10",
      retentionDays: "730",
    });
    expect(settings.status).toBe(404);
    expect((await intruder.post(`/sites/${a.site.id}/team`, { intent: "deactivate", userId: a.people.cook.id })).status).toBe(404);
    const [site] = await db.select().from(sites).where(eq(sites.id, a.site.id));
    expect(site.name).toBe(a.site.name);
    const [cook] = await db.select().from(users).where(eq(users.id, a.people.cook.id));
    expect(cook.active).toBe(true);
  });

  it("a manager cannot act on a person who is not a member of their site, even by guessing an id", async () => {
    const a = await newTenant();
    const b = await newTenant();
    const manager = await signedIn(a.people.manager.email, a.people.manager.password);
    const res = await manager.post(`/sites/${a.site.id}/team`, { intent: "setPin", userId: b.people.cook.id, pin: "1111" });
    expect(res.status).toBe(404);
  });

  it("a malformed id is 404, not an error", async () => {
    const a = await newTenant();
    const c = await signedIn(a.people.cook.email, a.people.cook.password);
    expect((await c.get("/sites/not-a-uuid")).status).toBe(404);
    expect((await c.get("/sites/00000000-0000-4000-8000-000000000000")).status).toBe(404);
  });
});
