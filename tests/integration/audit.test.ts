import { and, desc, eq, sql } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { auditEvents, sites } from "~db/schema";
import { signedIn } from "../helpers/client";
import { db, newTenant } from "../helpers/db";

describe("audit trail", () => {
  it("the database refuses to change or delete an audit event", async () => {
    const { org } = await newTenant();
    await db.insert(auditEvents).values({ organisationId: org.id, actorKind: "system", actorLabel: "test", action: "test.event", entity: "organisation", entityId: org.id });
    const refused = { cause: { message: expect.stringMatching(/audit_events is append-only/) } };
    await expect(db.execute(sql`update audit_events set action = 'forged' where organisation_id = ${org.id}`)).rejects.toMatchObject(refused);
    await expect(db.execute(sql`delete from audit_events where organisation_id = ${org.id}`)).rejects.toMatchObject(refused);
    await expect(db.execute(sql`truncate audit_events`)).rejects.toMatchObject(refused);
    const rows = await db.select().from(auditEvents).where(eq(auditEvents.organisationId, org.id));
    expect(rows.map((r) => r.action)).toContain("test.event");
  });

  it("saving site settings writes who changed what, before and after", async () => {
    const { people, site, org } = await newTenant();
    const manager = await signedIn(people.manager.email, people.manager.password);
    const res = await manager.post(`/sites/${site.id}/settings`, {
      name: "Prep Kitchen East",
      temperatureUnit: "C",
      timeZone: "Europe/Lisbon",
      ruleSetCode: "fsanz-3.2.2-7",
      readingIntervalMinutes: "15",
      overdueGraceMinutes: "5",
      retentionDays: "1095",
      allowSelfVerification: "true",
    });
    expect(res.status).toBe(200);
    const [after] = await db.select().from(sites).where(eq(sites.id, site.id));
    expect(after).toMatchObject({ name: "Prep Kitchen East", temperatureUnit: "C", ruleSetCode: "fsanz-3.2.2-7", readingIntervalMinutes: 15, retentionDays: 1095, allowSelfVerification: true });
    const [event] = await db
      .select()
      .from(auditEvents)
      .where(and(eq(auditEvents.organisationId, org.id), eq(auditEvents.action, "site.updated")))
      .orderBy(desc(auditEvents.id));
    expect(event.actorUserId).toBe(people.manager.id);
    expect(event.data).toMatchObject({ before: { name: site.name, temperatureUnit: "F" }, after: { name: "Prep Kitchen East", temperatureUnit: "C" } });
  });

  it("bad settings get a message per field and change nothing", async () => {
    const { people, site } = await newTenant();
    const admin = await signedIn(people.admin.email, people.admin.password);
    const res = await admin.post(`/sites/${site.id}/settings`, {
      name: "",
      temperatureUnit: "K",
      timeZone: "Mars/Olympus",
      ruleSetCode: "fda-3-501.14-a",
      readingIntervalMinutes: "2",
      overdueGraceMinutes: "5",
      retentionDays: "30",
    });
    expect(res.status).toBe(400);
    const html = await res.text();
    expect(html).toContain("Choose a time zone from the list.");
    expect(html).toContain("Enter a whole number between 5 and 240.");
    expect(html).toContain("Enter a whole number between 365 and 3650.");
    const [after] = await db.select().from(sites).where(eq(sites.id, site.id));
    expect(after).toMatchObject({ name: site.name, temperatureUnit: "F", timeZone: site.timeZone, readingIntervalMinutes: 30 });
  });
});
