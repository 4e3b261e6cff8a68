import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { memberships, sites, users } from "~db/schema";
import { addMembership, createSite, createUser } from "~db/factories";
import { Client, signedIn } from "../helpers/client";
import { linkIn, mailsTo } from "../helpers/maildev";
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

  it("a manager cannot deactivate, or set the PIN of, an administrator who also works at their site", async () => {
    const t = await newTenant();
    // The administrator also works in this kitchen as a cook.
    const other = await createSite(db, { organisationId: t.org.id, name: "Second kitchen", timeZone: "UTC", temperatureUnit: "C", ruleSetCode: "fda-3-501.14-a" });
    const boss = await createUser(db, { organisationId: t.org.id, name: "Boss", email: `boss-${t.org.slug}@tenant.example`, password: "a-long-test-password" });
    await addMembership(db, boss.id, other.id, "admin");
    await addMembership(db, boss.id, t.site.id, "cook");
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    expect((await manager.post(`/sites/${t.site.id}/team`, { intent: "deactivate", userId: boss.id })).status).toBe(403);
    expect((await manager.post(`/sites/${t.site.id}/team`, { intent: "setPin", userId: boss.id, pin: "1234" })).status).toBe(403);
    const [row] = await db.select().from(users).where(eq(users.id, boss.id));
    expect(row.active).toBe(true);
    expect(row.pinHash).toBeNull();
    // The site's own administrator may.
    const admin = await signedIn(t.people.admin.email, t.people.admin.password);
    expect((await admin.post(`/sites/${t.site.id}/team`, { intent: "setPin", userId: boss.id, pin: "1234" })).status).toBe(200);
  });

  it("an invitation cannot pull an account of another organisation in", async () => {
    const a = await newTenant();
    const b = await newTenant();
    const email = `shared-${a.org.slug}@tenant.example`;
    // Both organisations invite the same new address; the second acceptance is refused.
    const ma = await signedIn(a.people.manager.email, a.people.manager.password);
    const mb = await signedIn(b.people.manager.email, b.people.manager.password);
    const before = Date.now();
    await ma.post(`/sites/${a.site.id}/team`, { intent: "invite", email, name: "Dual", role: "cook" });
    await mb.post(`/sites/${b.site.id}/team`, { intent: "invite", email, name: "Dual", role: "cook" });
    const mails = await (async () => {
      for (let i = 0; i < 50; i++) {
        const list = await mailsTo(email);
        if (list.filter((m) => Date.parse(m.time) >= before - 1500).length >= 2) return list;
        await new Promise((r) => setTimeout(r, 150));
      }
      throw new Error("no invitations");
    })();
    const paths = mails.slice(-2).map((m) => linkIn(m, "/invite/"));
    const results = [];
    for (const path of paths) results.push(await new Client().post(path, { name: "Dual", password: "a-fine-password", confirm: "a-fine-password" }));
    expect(results.map((r) => r.status).sort()).toEqual([302, 400]);
    const rows = await db.select().from(memberships).innerJoin(users, eq(users.id, memberships.userId)).where(eq(users.email, email));
    expect(rows).toHaveLength(1);
  });
});
