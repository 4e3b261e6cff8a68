import { get } from "node:http";
import { spawn } from "node:child_process";
import { readFileSync, writeFileSync } from "node:fs";
import { randomUUID } from "node:crypto";
import { and, eq, sql } from "drizzle-orm";
import { afterAll, describe, expect, it } from "vitest";
import { alertDeliveries, alertEvents, alertRecipients, sites } from "~db/schema";
import { siteTime } from "~/lib/site-time";
import { APP_URL, Client, MAILDEV_URL, signedIn } from "../helpers/client";
import { db, newTenant } from "../helpers/db";
import { linkIn, mailsTo, waitForMail } from "../helpers/maildev";

type Tenant = Awaited<ReturnType<typeof newTenant>>;
type Kind = (typeof alertEvents.$inferSelect)["kind"];
const ago = (ms: number) => new Date(Date.now() - ms).toISOString();
const MIN = 60_000;
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

async function until<T>(what: string, fn: () => Promise<T | null | undefined | false>, timeoutMs = 15_000): Promise<T> {
  const end = Date.now() + timeoutMs;
  while (Date.now() < end) {
    const v = await fn();
    if (v) return v;
    await sleep(200);
  }
  throw new Error(`timed out waiting for ${what}`);
}

/** A batch started through the API as the tenant's cook; `over` changes the pan, method or start. */
async function startBatch(t: Tenant, cook: Client, over: Record<string, unknown> = {}) {
  const res = await cook.request("/api/v1/batches", {
    json: {
      clientId: randomUUID(),
      productId: t.product.id,
      lotCode: `L-${randomUUID().slice(0, 4)}`,
      pan: { size: "gn-1/1", depthMm: 65, count: 1, fillDepthMm: 50 },
      method: "walk-in",
      start: { value: 150, unit: "F", takenAt: ago(2 * MIN) },
      ...over,
    },
  });
  expect(res.status).toBe(201);
  return ((await res.json()) as { batch: { id: string; lotCode: string } }).batch;
}

// A deep, lidded pan in a still walk-in: the model says stage 1 will be missed (common practice: 10 cm of
// chili under a lid takes many hours to cool).
const deepLidded = { pan: { size: "gn-1/1", depthMm: 150, count: 1, fillDepthMm: 140 }, lid: true };

const eventsOf = (batchId: string, kind?: Kind) =>
  db.select().from(alertEvents).where(kind ? and(eq(alertEvents.batchId, batchId), eq(alertEvents.kind, kind)) : eq(alertEvents.batchId, batchId));

const deliveriesOf = (eventId: string) => db.select().from(alertDeliveries).where(eq(alertDeliveries.eventId, eventId)).orderBy(alertDeliveries.level);

async function mailAbout(email: string, lotCode: string, subject: RegExp, timeoutMs = 30_000) {
  return until(`a mail to ${email} about ${lotCode}`, async () => (await mailsTo(email)).find((m) => m.subject.includes(lotCode) && subject.test(m.subject)), timeoutMs);
}

/** A GET on a new connection (no keep-alive), so a server with several processes may hand it to any. */
function freshGet(url: string): Promise<{ worker: string }> {
  return new Promise((done, fail) => {
    get(url, { agent: false }, (res) => {
      let body = "";
      res.on("data", (c) => (body += c));
      res.on("end", () => done(JSON.parse(body)));
    }).on("error", fail);
  });
}

describe("alerts by e-mail", () => {
  it("a batch going off track e-mails the first recipient once, naming the batch, the reason, the deadline in site time and a link", async () => {
    const t = await newTenant();
    const cook = await signedIn(t.people.cook.email, t.people.cook.password);
    const batch = await startBatch(t, cook, deepLidded);
    const [ev] = await until("the off-track event", async () => (await eventsOf(batch.id, "off_track"))[0] ? eventsOf(batch.id, "off_track") : null);
    expect(ev.detail).toMatchObject({ stage: 1, lotCode: batch.lotCode });
    const mail = await mailAbout(t.people.manager.email, batch.lotCode, /Off track/);
    expect(mail.subject).toContain(t.product.name);
    expect(mail.subject).toContain("stage 1");
    // The deadline as a clock time in the site's zone (America/Denver: MST or MDT).
    const deadline = siteTime(ev.deadlineAt!.getTime(), "America/Denver", "en");
    expect(mail.subject).toContain(deadline);
    expect(mail.text).toContain(`Deadline: ${deadline}`);
    expect(deadline).toMatch(/M[SD]T/);
    expect(mail.text).toMatch(/probe reading is the record/);
    expect(linkIn(mail, `/sites/${t.site.id}/batches/${batch.id}`)).toBe(`/sites/${t.site.id}/batches/${batch.id}`);
    expect(mail.text).toContain(`?alert=${ev.id}`);
    // The job went through the queue in PostgreSQL.
    const [d] = await deliveriesOf(ev.id);
    const jobs = await db.execute(sql`SELECT state FROM pgboss.job WHERE name = 'alert-mail' AND singleton_key = ${d.id}`);
    expect(jobs.rows.length).toBeGreaterThanOrEqual(1);
    // Several sweeps later (one a second here), still one e-mail and one event.
    await sleep(3000);
    expect((await mailsTo(t.people.manager.email)).filter((m) => m.subject.includes(batch.lotCode))).toHaveLength(1);
    expect(await eventsOf(batch.id, "off_track")).toHaveLength(1);
    expect((await deliveriesOf(ev.id)).map((x) => [x.status, x.attempts])).toEqual([["sent", 1]]);
  });

  it("a missed stage is raised by the sweep when its deadline passes, with nobody entering anything", async () => {
    const t = await newTenant();
    const cook = await signedIn(t.people.cook.email, t.people.cook.password);
    // Stage 1 (2 h to 70 °F) ends 4 s from now; no reading will meet it.
    const startedAt = Date.now() - 2 * 3600_000 + 4000;
    const batch = await startBatch(t, cook, { start: { value: 150, unit: "F", takenAt: new Date(startedAt).toISOString() } });
    await cook.request(`/api/v1/batches/${batch.id}/readings`, { json: { clientId: randomUUID(), value: 95, unit: "F", takenAt: ago(1000) } });
    expect(await eventsOf(batch.id, "stage_missed")).toHaveLength(0);
    const [ev] = await until("the stage-missed event", async () => {
      const rows = await eventsOf(batch.id, "stage_missed");
      return rows.length ? rows : null;
    });
    expect(ev.createdAt.getTime()).toBeGreaterThanOrEqual(startedAt + 2 * 3600_000 - 1000);
    expect(ev.deadlineAt!.getTime()).toBe(startedAt + 2 * 3600_000);
    const mail = await mailAbout(t.people.manager.email, batch.lotCode, /Stage 1 missed/);
    expect(mail.text).toContain("no reading at or below 70 °F");
    expect(mail.text).toContain(`Deadline: ${siteTime(ev.deadlineAt!.getTime(), "America/Denver", "en")}`);
    expect(mail.text).toMatch(/reheat to 74 °C \(165 °F\)/);
  });

  it("an overdue reading is raised once the interval and the grace have passed, and clears when a reading comes", async () => {
    const t = await newTenant();
    const cook = await signedIn(t.people.cook.email, t.people.cook.password);
    // Interval 30 min and grace 10 min (the defaults): the last reading becomes overdue 3 s from now.
    const last = Date.now() - 40 * MIN + 3000;
    const batch = await startBatch(t, cook, { start: { value: 150, unit: "F", takenAt: new Date(last).toISOString() } });
    expect(await eventsOf(batch.id, "reading_overdue")).toHaveLength(0);
    const [ev] = await until("the overdue event", async () => {
      const rows = await eventsOf(batch.id, "reading_overdue");
      return rows.length ? rows : null;
    });
    const due = last + 30 * MIN;
    expect(Math.abs(ev.deadlineAt!.getTime() - due)).toBeLessThan(1000);
    expect(ev.createdAt.getTime()).toBeGreaterThanOrEqual(due + 10 * MIN - 1000);
    const mail = await mailAbout(t.people.manager.email, batch.lotCode, /Reading overdue/);
    expect(mail.subject).toContain(`it was due at ${siteTime(ev.deadlineAt!.getTime(), "America/Denver", "en")}`);
    expect(mail.text).toContain("Grace allowed: 10 min");
    await cook.request(`/api/v1/batches/${batch.id}/readings`, { json: { clientId: randomUUID(), value: 90, unit: "F" } });
    await until("the overdue event to clear", async () => (await eventsOf(batch.id, "reading_overdue"))[0].resolvedAt);
  });

  it("a burst of back-dated entries (a tablet catching up) raises nothing the next entry disproves", async () => {
    const t = await newTenant();
    const cook = await signedIn(t.people.cook.email, t.people.cook.password);
    const { sweep } = await import("~/server/alerts.server");
    // A sweep from this process, once the app's own (which take turns on a lock) let it in.
    const sweepHere = () => until("a sweep", async () => (await sweep()).swept);
    // Alone, the start 70 min ago would be an overdue reading (30 min interval + 10 min grace).
    const batch = await startBatch(t, cook, { start: { value: 152, unit: "F", takenAt: ago(70 * MIN) } });
    await sweepHere();
    for (const [minutes, value] of [[40, 138], [12, 121]] as const) {
      await cook.request(`/api/v1/batches/${batch.id}/readings`, { json: { clientId: randomUUID(), value, unit: "F", takenAt: ago(minutes * MIN) } });
      await sweepHere();
    }
    expect(await eventsOf(batch.id, "reading_overdue")).toHaveLength(0);
    // The settle time (2 s here) and more sweeps pass: the batch, with its readings in, is not overdue.
    await sleep(3500);
    expect(await eventsOf(batch.id, "reading_overdue")).toHaveLength(0);
    expect((await mailsTo(t.people.manager.email)).filter((m) => /Reading overdue/.test(m.subject))).toHaveLength(0);
  });

  it("the daily digest lists the finished batches waiting for a signature, once per local day, with a link to the queue", async () => {
    const t = await newTenant();
    const cook = await signedIn(t.people.cook.email, t.people.cook.password);
    const batch = await startBatch(t, cook, { start: { value: 150, unit: "F", takenAt: ago(5 * 3600_000) } });
    await cook.request(`/api/v1/batches/${batch.id}/readings`, { json: { clientId: randomUUID(), value: 66, unit: "F", takenAt: ago(4 * 3600_000) } });
    const ended = await cook.request(`/api/v1/batches/${batch.id}/readings`, { json: { clientId: randomUUID(), value: 40, unit: "F", takenAt: ago(3600_000) } });
    expect(((await ended.json()) as { record: { outcome: string } }).record.outcome).toBe("passed");
    // The digest hour is 0: any hour of today is past it, so the next sweep sends today's digest.
    await db.update(sites).set({ digestHour: 0 }).where(eq(sites.id, t.site.id));
    const mail = await until("the digest", async () => (await mailsTo(t.people.manager.email)).find((m) => /wait for your signature/.test(m.subject)));
    expect(mail.text).toContain(batch.lotCode);
    expect(mail.subject).toContain(t.site.name);
    expect(linkIn(mail, `/sites/${t.site.id}/review`)).toBe(`/sites/${t.site.id}/review`);
    await sleep(2500);
    const digests = await db.select().from(alertEvents).where(and(eq(alertEvents.siteId, t.site.id), eq(alertEvents.kind, "verification_digest")));
    expect(digests).toHaveLength(1);
    expect((await mailsTo(t.people.manager.email)).filter((m) => /wait for your signature/.test(m.subject))).toHaveLength(1);
  });

  it("an alert nobody acknowledges escalates to the next recipient after the site's delay; an acknowledged one does not", async () => {
    const t = await newTenant();
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    // The manager sets the list through the alerts screen: manager first, then the administrator.
    const form: Record<string, string> = { intent: "recipients", [`order.off_track.${t.people.manager.id}`]: "1", [`order.off_track.${t.people.admin.id}`]: "2" };
    expect((await manager.request(`/sites/${t.site.id}/alerts`, { form })).status).toBe(200);
    expect((await manager.request(`/sites/${t.site.id}/alerts`, { form: { intent: "timing", escalateAfterMinutes: "1", digestHour: "23" } })).status).toBe(200);
    const cook = await signedIn(t.people.cook.email, t.people.cook.password);
    const first = await startBatch(t, cook, deepLidded);
    const second = await startBatch(t, cook, deepLidded);
    await mailAbout(t.people.manager.email, first.lotCode, /Off track/);
    await mailAbout(t.people.manager.email, second.lotCode, /Off track/);
    const [evA] = await eventsOf(first.id, "off_track");
    const [evB] = await eventsOf(second.id, "off_track");
    // The manager has the second in hand.
    expect((await manager.request(`/sites/${t.site.id}/alerts`, { form: { intent: "acknowledge", eventId: evB.id } })).status).toBe(200);
    await until("both sent", async () => (await deliveriesOf(evA.id))[0]?.status === "sent" && (await deliveriesOf(evB.id))[0]?.status === "sent");
    // A minute passes for both (the sent time moves back rather than the test waiting a minute).
    await db.update(alertDeliveries).set({ sentAt: new Date(Date.now() - 61_000) }).where(sql`${alertDeliveries.eventId} IN (${evA.id}, ${evB.id})`);
    const escalated = await mailAbout(t.people.admin.email, first.lotCode, /\[Escalated\]/);
    expect(escalated.text).toContain(`first sent to ${"manager " + t.people.manager.email.split(".")[1].split("@")[0]}`);
    // maildev holds the mail a moment before the worker records "sent".
    await until("the escalation recorded as sent", async () => (await deliveriesOf(evA.id))[1]?.status === "sent");
    expect((await deliveriesOf(evA.id)).map((d) => [d.level, d.userId, d.status])).toEqual([
      [0, t.people.manager.id, "sent"],
      [1, t.people.admin.id, "sent"],
    ]);
    await sleep(2500);
    expect(await deliveriesOf(evB.id)).toHaveLength(1);
    expect((await mailsTo(t.people.admin.email)).filter((m) => m.subject.includes(second.lotCode))).toHaveLength(0);
    // The acknowledgement is on the alerts screen, with who.
    const page = await (await manager.request(`/sites/${t.site.id}/alerts`)).text();
    expect(page).toContain(`Acknowledged by manager ${t.people.manager.email.split(".")[1].split("@")[0]}`);
  });

  it("recipient lists refuse people who cannot receive the alert, and change nothing", async () => {
    const t = await newTenant();
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    const res = await manager.request(`/sites/${t.site.id}/alerts`, { form: { intent: "recipients", [`order.off_track.${t.people.cook.id}`]: "1" } });
    expect(res.status).toBe(400);
    // All or nothing: a good first list is not saved when a later one names someone who cannot receive it.
    const mixed = await manager.request(`/sites/${t.site.id}/alerts`, { form: { intent: "recipients", [`order.off_track.${t.people.admin.id}`]: "1", [`order.reading_overdue.${t.people.qa.id}`]: "1" } });
    expect(mixed.status).toBe(400);
    const dup = await manager.request(`/sites/${t.site.id}/alerts`, { form: { intent: "recipients", [`order.stage_missed.${t.people.manager.id}`]: "1", [`order.stage_missed.${t.people.admin.id}`]: "1" } });
    expect(dup.status).toBe(400);
    expect(await db.select().from(alertRecipients).where(eq(alertRecipients.siteId, t.site.id))).toHaveLength(0);
    const bad = await manager.request(`/sites/${t.site.id}/alerts`, { form: { intent: "timing", escalateAfterMinutes: "0", digestHour: "24" } });
    expect(bad.status).toBe(400);
    const [s] = await db.select().from(sites).where(eq(sites.id, t.site.id));
    expect([s.escalateAfterMinutes, s.digestHour]).toEqual([15, 21]);
    // Cooks and QA do not manage alerts; another organisation's manager cannot see them.
    expect((await (await signedIn(t.people.cook.email, t.people.cook.password)).request(`/sites/${t.site.id}/alerts`)).status).toBe(403);
    expect((await (await signedIn(t.people.qa.email, t.people.qa.password)).request(`/sites/${t.site.id}/alerts`)).status).toBe(403);
    const other = await newTenant();
    expect((await (await signedIn(other.people.manager.email, other.people.manager.password)).request(`/sites/${t.site.id}/alerts`)).status).toBe(404);
    const [ev] = await db.insert(alertEvents).values({ siteId: t.site.id, kind: "off_track", dedupeKey: `test-${randomUUID()}` }).returning();
    const foreign = await (await signedIn(other.people.manager.email, other.people.manager.password)).request(`/sites/${other.site.id}/alerts`, { form: { intent: "acknowledge", eventId: ev.id } });
    expect(foreign.status).toBe(404);
    const [still] = await db.select().from(alertEvents).where(eq(alertEvents.id, ev.id));
    expect(still.acknowledgedAt).toBeNull();
  });

  it("two app processes work the same queue: each event is raised once and e-mailed once", async () => {
    // Every app process behind either port (the first runs one per core), each asked on a connection of its own.
    const workersAt = async (url: string) => {
      const seen = new Set<string>();
      for (let i = 0; i < 8; i++) seen.add((await freshGet(`${url}/healthz`)).worker);
      return seen;
    };
    const workers = new Set([...(await workersAt(APP_URL)), ...(await workersAt(process.env.SECOND_APP_URL!))]);
    expect(workers.size).toBeGreaterThanOrEqual(2);
    const t = await newTenant();
    const cook = await signedIn(t.people.cook.email, t.people.cook.password);
    const started = [];
    for (let i = 0; i < 6; i++) started.push(await startBatch(t, cook, deepLidded));
    for (const s of started) await mailAbout(t.people.manager.email, s.lotCode, /Off track/);
    await sleep(3000);
    const mails = (await mailsTo(t.people.manager.email)).filter((m) => /Off track/.test(m.subject));
    expect(mails).toHaveLength(6);
    for (const s of started) expect(mails.filter((m) => m.subject.includes(s.lotCode))).toHaveLength(1);
    const sent = await db
      .select({ by: alertDeliveries.sentBy })
      .from(alertDeliveries)
      .innerJoin(alertEvents, eq(alertEvents.id, alertDeliveries.eventId))
      .where(eq(alertEvents.siteId, t.site.id));
    expect(sent).toHaveLength(6);
    for (const s of sent) expect([...workers]).toContain(s.by);
    console.log("deliveries by worker:", Object.fromEntries([...workers].map((w) => [w, sent.filter((s) => s.by === w).length])));
  });

  it("concurrent sweeps and concurrent sends of the same delivery still make one event and one e-mail", async () => {
    const { raiseEvent } = await import("~/server/alerts.server");
    const { deliver } = await import("~/server/alert-worker.server");
    const t = await newTenant();
    const key = `race-${randomUUID()}`;
    const input = { kind: "reading_overdue" as const, key, batchId: null, deadlineAt: Date.now(), detail: { product: "Race stew", lotCode: key.slice(0, 13) } };
    const { sweep } = await import("~/server/alerts.server");
    // Two sweeps at once: the advisory lock lets at most one of them through.
    const both = await Promise.all([sweep(), sweep()]);
    expect(both.filter((r) => r.swept).length).toBeLessThanOrEqual(1);
    const results = await Promise.all(Array.from({ length: 5 }, () => raiseEvent(t.site, input)));
    expect(results.filter(Boolean)).toHaveLength(1);
    const events = await db.select().from(alertEvents).where(and(eq(alertEvents.siteId, t.site.id), eq(alertEvents.dedupeKey, key)));
    expect(events).toHaveLength(1);
    const [d] = await deliveriesOf(events[0].id);
    // raiseEvent in this process has no queue to hand the delivery to; two senders race for it here.
    const outcomes = await Promise.allSettled([deliver(d.id, { retryCount: 0, retryLimit: 3 }), deliver(d.id, { retryCount: 0, retryLimit: 3 })]);
    expect(outcomes.filter((o) => o.status === "fulfilled")).toHaveLength(1);
    await until("the race mail", async () => (await mailsTo(t.people.manager.email)).find((m) => m.subject.includes(key.slice(0, 13))));
    await sleep(1500);
    expect((await mailsTo(t.people.manager.email)).filter((m) => m.subject.includes(key.slice(0, 13)))).toHaveLength(1);
  });

  describe("when the SMTP server is down", () => {
    const smtp = process.env.MAILDEV_SMTP_PORT ?? "1125";
    const web = process.env.MAILDEV_WEB_PORT ?? "1180";
    const startMaildev = async () => {
      const child = spawn("node_modules/.bin/maildev", ["--ip", "127.0.0.1", "--web-ip", "127.0.0.1", "-s", smtp, "-w", web, "--silent"], { detached: true, stdio: "ignore" });
      child.unref();
      // npm test's clean-up stops the maildev named in this file.
      writeFileSync(process.env.MAILDEV_PID_FILE!, String(child.pid));
      await until("maildev", async () => (await fetch(`${MAILDEV_URL}/api/healthz`).catch(() => null))?.ok);
    };
    afterAll(async () => {
      if (!(await fetch(`${MAILDEV_URL}/api/healthz`).catch(() => null))?.ok) await startMaildev();
    });

    it("sends are retried with back-off, shown on the alerts screen, and delivered once when it returns", async () => {
      const t = await newTenant();
      const manager = await signedIn(t.people.manager.email, t.people.manager.password);
      process.kill(Number(readFileSync(process.env.MAILDEV_PID_FILE!, "utf8")));
      await until("maildev to stop", async () => !(await fetch(`${MAILDEV_URL}/api/healthz`).catch(() => null)));
      const cook = await signedIn(t.people.cook.email, t.people.cook.password);
      const batch = await startBatch(t, cook, deepLidded);
      const [ev] = await until("the event", async () => {
        const rows = await eventsOf(batch.id, "off_track");
        return rows.length ? rows : null;
      });
      const failing = await until("two failed attempts", async () => {
        const [d] = await deliveriesOf(ev.id);
        return d && d.attempts >= 2 && d.status === "retrying" ? d : null;
      }, 20_000);
      expect(failing.lastError).toMatch(/ECONNREFUSED|connect/i);
      const page = await (await manager.request(`/sites/${t.site.id}/alerts?show=failed`)).text();
      expect(page).toContain("retrying");
      expect(page).toContain("ECONNREFUSED");
      await startMaildev();
      const mail = await mailAbout(t.people.manager.email, batch.lotCode, /Off track/, 40_000);
      expect(mail.subject).toContain(t.product.name);
      const [done] = await deliveriesOf(ev.id);
      expect(done.status).toBe("sent");
      expect(done.attempts).toBeGreaterThanOrEqual(3);
      await sleep(2000);
      expect((await mailsTo(t.people.manager.email)).filter((m) => m.subject.includes(batch.lotCode))).toHaveLength(1);
    }, 90_000);
  });
});
