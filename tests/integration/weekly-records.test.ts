import { and, eq } from "drizzle-orm";
import ExcelJS from "exceljs";
import { describe, expect, it } from "vitest";
import { alertDeliveries, alertEvents, alertRecipients, auditEvents, sites } from "~db/schema";
import { en } from "~/lib/locales/en";
import { lastWeek, localDateOf, rangeInstants } from "~/lib/records-export";
import { endedBatch } from "../helpers/batches";
import { MAILDEV_URL, signedIn } from "../helpers/client";
import { db, newTenant } from "../helpers/db";
import { mailsTo, waitForMail } from "../helpers/maildev";

type Tenant = Awaited<ReturnType<typeof newTenant>>;
type Attachment = { filename: string; generatedFileName: string; contentType: string };
const MIN = 60_000;
const DAY = 86_400_000;
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

// The site's local weekday (ISO, 1 = Monday) and hour, worked out here apart from the app's code.
function localWeekdayHour(ms: number, timeZone: string) {
  const parts = Object.fromEntries(new Intl.DateTimeFormat("en-GB", { timeZone, weekday: "short", hour: "2-digit", hourCycle: "h23" }).formatToParts(ms).map((p) => [p.type, p.value]));
  return { weekday: ["Mon", "Tue", "Wed", "Thu", "Fri", "Sat", "Sun"].indexOf(parts.weekday) + 1, hour: Number(parts.hour) };
}

/** A new tenant whose weekly e-mail cannot fire before the test sets its time (Sunday 23:00 is at the end of every week). */
async function quietTenant(zone = "America/Denver") {
  const t = await newTenant();
  await db.update(sites).set({ weeklyRecordsWeekday: 7, weeklyRecordsHour: 23, timeZone: zone }).where(eq(sites.id, t.site.id));
  return { ...t, site: { ...t.site, timeZone: zone } };
}

const weeklyMails = async (to: string, site: string) => (await mailsTo(to)).filter((m) => m.subject.startsWith(`Cooling records of ${site}`));
const weeklyEvents = (t: Tenant) => db.select().from(alertEvents).where(and(eq(alertEvents.siteId, t.site.id), eq(alertEvents.kind, "weekly_records")));

describe("weekly records e-mail", () => {
  it("when the site's weekday and hour come, QA gets one e-mail with last week's workbook attached, and later sweeps send no more", async () => {
    const t = await quietTenant();
    const zone = t.site.timeZone;
    const now = Date.now();
    const week = lastWeek(zone, now);
    const { fromMs, toMs } = rangeInstants(week, zone);
    // Two batches of last week (one discarded: flagged), and one of this week that must stay out.
    await endedBatch(t, { state: "cooled", lotCode: "W-IN-1", startedAt: new Date(fromMs + 2 * DAY + 3 * 3600_000), endedAt: new Date(fromMs + 2 * DAY + 7 * 3600_000) });
    await endedBatch(t, { state: "discarded", lotCode: "W-IN-2", startedAt: new Date(toMs - 5 * 3600_000), endedAt: new Date(toMs - 4 * 3600_000) });
    const thisWeek = toMs + (now - toMs) / 2;
    await endedBatch(t, { state: "cooled", lotCode: "W-NOW", startedAt: new Date(thisWeek), endedAt: new Date(Math.min(now, thisWeek + 3600_000)) });

    const { weekday, hour } = localWeekdayHour(now, zone);
    await db.update(sites).set({ weeklyRecordsWeekday: weekday, weeklyRecordsHour: hour }).where(eq(sites.id, t.site.id));
    const mail = (await waitForMail(t.people.qa.email, { after: now, timeoutMs: 45_000 })) as Awaited<ReturnType<typeof waitForMail>> & { attachments?: Attachment[] };
    expect(mail.subject).toBe(`Cooling records of ${t.site.name}, ${week.from} to ${week.to}`);
    expect(mail.text).toContain(`last week, ${week.from} to ${week.to}`);
    expect(mail.text).toContain("2 batches; 1 flagged");
    expect(mail.text).toContain("2 ended and not yet verified");
    expect(mail.text).toContain(`at least ${t.site.retentionDays} days`);
    expect(mail.text).toContain(en.app.caution);
    expect(mail.text).toContain(`/sites/${t.site.id}/export.xlsx?from=${week.from}&to=${week.to}`);

    expect(mail.attachments).toHaveLength(1);
    const [file] = mail.attachments!;
    expect(file.filename).toMatch(new RegExp(`^kitchen-.+-cooling-records-${week.from}-to-${week.to}\\.xlsx$`));
    expect(file.contentType).toBe("application/vnd.openxmlformats-officedocument.spreadsheetml.sheet");
    const res = await fetch(`${MAILDEV_URL}/api/email/${mail.id}/attachment/${encodeURIComponent(file.generatedFileName)}`);
    expect(res.status).toBe(200);
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.load(await res.arrayBuffer());
    const lots: unknown[] = [];
    wb.getWorksheet("Batches")!.eachRow((row, n) => {
      if (n > 2) lots.push(row.getCell(1).value);
    });
    expect(lots).toEqual(["W-IN-1", "W-IN-2"]);
    const cover = new Map<unknown, unknown>();
    wb.getWorksheet("Cover")!.eachRow((row) => cover.set(row.getCell(1).value, row.getCell(2).value));
    expect(cover.get("Exported by")).toBe("weekly e-mail");
    expect(wb.getWorksheet("Curves")!.getImages()).toHaveLength(2);

    // The event is keyed by the ISO week reported; the manager (not on the default list) got nothing.
    const thursday = new Date(Date.parse(`${week.from}T00:00:00Z`) + 3 * DAY);
    const isoWeek = Math.ceil(((thursday.getTime() - Date.UTC(thursday.getUTCFullYear(), 0, 1)) / DAY + 1) / 7);
    const events = await weeklyEvents(t);
    expect(events.map((e) => e.dedupeKey)).toEqual([`${thursday.getUTCFullYear()}-W${String(isoWeek).padStart(2, "0")}`]);
    const deliveries = await db.select().from(alertDeliveries).where(eq(alertDeliveries.eventId, events[0].id));
    expect(deliveries.map((d) => [d.userId, d.status])).toEqual([[t.people.qa.id, "sent"]]);
    const audit = await db.select().from(auditEvents).where(and(eq(auditEvents.siteId, t.site.id), eq(auditEvents.action, "records.exported")));
    expect(audit.map((a) => [a.actorKind, (a.data as { delivery?: string }).delivery])).toEqual([["system", deliveries[0].id]]);

    await sleep(4000);
    expect(await weeklyMails(t.people.qa.email, t.site.name)).toHaveLength(1);
    expect(await weeklyMails(t.people.manager.email, t.site.name)).toHaveLength(0);
    expect(await weeklyEvents(t)).toHaveLength(1);
  });

  it("a site whose weekday and hour have not come yet sends nothing, nor one whose last week had no batches", async () => {
    // A zone where it is not yet 23:00 locally, so "in an hour" is still today.
    const now = Date.now();
    const zone = ["UTC", "Asia/Tokyo", "America/New_York"].find((z) => localWeekdayHour(now, z).hour < 22)!;
    const t = await quietTenant(zone);
    const { weekday, hour } = localWeekdayHour(now, zone);
    await db.update(sites).set({ weeklyRecordsWeekday: weekday, weeklyRecordsHour: hour + 1 }).where(eq(sites.id, t.site.id));
    const week = lastWeek(zone, now);
    await endedBatch(t, { state: "cooled", startedAt: new Date(rangeInstants(week, zone).fromMs + DAY), endedAt: new Date(rangeInstants(week, zone).fromMs + DAY + 3600_000) });
    // Its time has come for this one, but last week it cooled nothing (a batch of this week does not count).
    const empty = await quietTenant();
    const here = localWeekdayHour(now, empty.site.timeZone);
    await endedBatch(empty, { state: "cooled", startedAt: new Date(now - 5 * MIN), endedAt: new Date(now) });
    await db.update(sites).set({ weeklyRecordsWeekday: here.weekday, weeklyRecordsHour: here.hour }).where(eq(sites.id, empty.site.id));
    await sleep(4000);
    expect(await weeklyEvents(t)).toHaveLength(0);
    expect(await weeklyMails(t.people.qa.email, t.site.name)).toHaveLength(0);
    expect(await weeklyEvents(empty)).toHaveLength(0);
    expect(localDateOf(now, zone)).toMatch(/^\d{4}-\d{2}-\d{2}$/);
  });

  it("the site settings take the weekday and hour, with a message per field for bad values", async () => {
    const t = await quietTenant();
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    const form = { name: t.site.name, temperatureUnit: "F", timeZone: "America/Denver", ruleSetCode: t.site.ruleSetCode, readingIntervalMinutes: "30", overdueGraceMinutes: "10", retentionDays: "730" };
    const bad = await manager.post(`/sites/${t.site.id}/settings`, { ...form, weeklyRecordsWeekday: "8", weeklyRecordsHour: "24" });
    expect(bad.status).toBe(400);
    const html = await bad.text();
    expect(html).toContain(en.weeklyRecords.badWeekday);
    expect(html).toContain(en.weeklyRecords.badHour);
    const [unchanged] = await db.select().from(sites).where(eq(sites.id, t.site.id));
    expect([unchanged.weeklyRecordsWeekday, unchanged.weeklyRecordsHour]).toEqual([7, 23]);
    const good = await manager.post(`/sites/${t.site.id}/settings`, { ...form, weeklyRecordsWeekday: "7", weeklyRecordsHour: "22" });
    expect(good.status).toBe(200);
    const [after] = await db.select().from(sites).where(eq(sites.id, t.site.id));
    expect([after.weeklyRecordsWeekday, after.weeklyRecordsHour]).toEqual([7, 22]);
    const page = await (await manager.get(`/sites/${t.site.id}/settings`)).text();
    expect(page).toContain(en.weeklyRecords.settingsTitle);
  });

  it("the alerts screen lists the weekly records e-mail with its explanation, and QA can be on that list", async () => {
    const t = await quietTenant();
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    const html = await (await manager.get(`/sites/${t.site.id}/alerts`)).text();
    expect(html).toContain(en.alerts.kind.weekly_records);
    expect(html).toContain(en.weeklyRecords.alertsHelp.slice(0, 60).replaceAll("'", "&#x27;"));
    expect(html).toContain(`name="order.weekly_records.${t.people.qa.id}"`);
    expect(html).not.toContain(`name="order.off_track.${t.people.qa.id}"`);
    // A list with the manager first and QA second is saved for this kind.
    const res = await manager.post(`/sites/${t.site.id}/alerts`, { intent: "recipients", [`order.weekly_records.${t.people.manager.id}`]: "1", [`order.weekly_records.${t.people.qa.id}`]: "2" });
    expect(res.status).toBeLessThan(400);
    const saved = await db.select().from(alertRecipients).where(and(eq(alertRecipients.siteId, t.site.id), eq(alertRecipients.kind, "weekly_records")));
    expect(saved.toSorted((a, b) => a.position - b.position).map((r) => r.userId)).toEqual([t.people.manager.id, t.people.qa.id]);
  });
});
