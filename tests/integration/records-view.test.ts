import { randomUUID } from "node:crypto";
import { beforeAll, describe, expect, it } from "vitest";
import { readings } from "~db/schema";
import { addMembership, createProduct, createSite } from "~db/factories";
import { addReading, afterSweep, coolingBatch, endedBatch, minutesAgo, sign } from "../helpers/batches";
import { Client, signedIn } from "../helpers/client";
import { db, newTenant } from "../helpers/db";

type Tenant = Awaited<ReturnType<typeof newTenant>>;
const DAY = 24 * 60;

/** The records view as the page shows it: the rows (batch id, text, stage statuses) and the totals. */
async function records(c: Client, path: string) {
  const res = await c.get(path);
  const html = await res.text();
  const rows = html
    .split('data-testid="record-row"')
    .slice(1)
    .map((chunk) => chunk.slice(0, chunk.indexOf("</tr>")))
    .map((row) => ({
      id: /\/batches\/([0-9a-f-]{36})/.exec(row)![1],
      stages: [...row.matchAll(/data-status="([a-z-]+)"/g)].map((m) => m[1]),
      text: row.replace(/<!-- -->/g, "").replace(/<[^>]+>/g, " ").replace(/\s+/g, " "),
    }));
  const total = (id: string) => new RegExp(`data-testid="total-${id}">([^<]*)<`).exec(html)?.[1];
  return { status: res.status, html, rows, ids: rows.map((r) => r.id), total };
}

const sorted = (ids: string[]) => [...ids].sort();

describe("records view", () => {
  let t: Tenant;
  let other: Tenant;
  let qa: Client;
  let manager: Client;
  let cook: Client;
  let site2: Awaited<ReturnType<typeof createSite>>;
  const b: Record<string, string> = {};

  beforeAll(async () => {
    t = await newTenant();
    other = await newTenant();
    const apple = await createProduct(db, { siteId: t.site.id, name: "Apple compote", composition: { water: 85, carbohydrate: 14, fibre: 1 } });
    // Cooled first time, with readings meeting both stages: 65 °F at 1 h (≤ 70 °F in 2 h), 40 °F at 4 h (≤ 41 °F in 6 h).
    const aStart = minutesAgo(2 * DAY);
    b.a = (await endedBatch(t, { state: "cooled", startedAt: aStart, endedAt: minutesAgo(2 * DAY - 240), lotCode: "REC-A", equipmentId: t.walkIn.id, startedBy: t.people.cook.id })).id;
    await addReading(t, b.a, 65, new Date(aStart.getTime() + 60 * 60_000));
    await addReading(t, b.a, 40, new Date(aStart.getTime() + 240 * 60_000));
    // Cooled after a reheat, in a blast chiller, with a reading entered late.
    b.b = (await endedBatch(t, { state: "cooled_after_reheat", startedAt: minutesAgo(DAY), endedAt: minutesAgo(DAY - 400), lotCode: "REC-B", productId: apple.id, method: "blast-chiller" })).id;
    await db.insert(readings).values({ batchId: b.b, siteId: t.site.id, clientId: randomUUID(), valueEntered: 120, unitEntered: "F", valueC: 48.9, takenAt: minutesAgo(DAY - 60), receivedAt: minutesAgo(DAY - 100), late: true, source: "api" });
    // Discarded and signed.
    b.c = (await endedBatch(t, { state: "discarded", startedAt: minutesAgo(3 * DAY), endedAt: minutesAgo(3 * DAY - 200), missedAt: minutesAgo(3 * DAY - 120), lotCode: "REC-C" })).id;
    await sign(t, b.c, { readings: 1, actions: 0 });
    // Still cooling (blast chiller, ahead): from its readings.
    b.d = (await coolingBatch(t, { lotCode: "REC-D", startedMinutesAgo: 20 })).id;
    // Ten days ago: outside the default seven days.
    b.e = (await endedBatch(t, { state: "cooled", startedAt: minutesAgo(10 * DAY), endedAt: minutesAgo(10 * DAY - 300), lotCode: "REC-E" })).id;
    // Another organisation's batch, started today.
    b.foreign = (await endedBatch(other, { state: "cooled", startedAt: minutesAgo(60), endedAt: minutesAgo(10), lotCode: "REC-FOREIGN" })).id;
    // A second site of the same organisation, where the QA lead also works.
    site2 = await createSite(db, { organisationId: t.org.id, name: `Commissary ${t.site.name}`, timeZone: "America/Chicago", temperatureUnit: "C", ruleSetCode: "fda-3-501.14-a" });
    await addMembership(db, t.people.qa.id, site2.id, "qa");
    const stew = await createProduct(db, { siteId: site2.id, name: "Lentil stew", composition: { water: 80, protein: 7, carbohydrate: 12, fibre: 1 } });
    b.f = (await endedBatch({ ...t, site: site2, product: stew }, { state: "cooled", startedAt: minutesAgo(DAY), endedAt: minutesAgo(DAY - 300), lotCode: "REC-F" })).id;
    await afterSweep(t);
    [qa, manager, cook] = await Promise.all([signedIn(t.people.qa.email, t.people.qa.password), signedIn(t.people.manager.email, t.people.manager.password), signedIn(t.people.cook.email, t.people.cook.password)]);
  });

  const site = () => `/sites/${t.site.id}/records`;

  it("shows the site's batches of the last seven days with totals and the first-time pass rate (not another site's, not older ones)", async () => {
    const r = await records(qa, site());
    expect(r.status).toBe(200);
    expect(sorted(r.ids)).toEqual(sorted([b.a, b.b, b.c, b.d]));
    // Newest first by default.
    expect(r.ids).toEqual([b.d, b.b, b.a, b.c]);
    expect(r.total("batches")).toBe("4");
    expect(r.total("ended")).toBe("3");
    // 1 of 3 ended batches cooled first time.
    expect(r.total("pass-rate")).toBe("33.3 % (1 of 3)");
    expect(r.total("reheated")).toBe("1");
    expect(r.total("discarded")).toBe("1");
    expect(r.total("cooling")).toBe("1");
    expect(r.total("unverified")).toBe("2");
    expect(r.total("late")).toBe("1");
    expect(r.html).toContain("The probe reading is the record");
    expect(r.html).toContain("Records are kept for 730 days");
  });

  it("each row's stages come from its readings: both met by the readings that met them", async () => {
    const r = await records(qa, site());
    const a = r.rows.find((x) => x.id === b.a)!;
    expect(a.stages).toEqual(["met", "met"]);
    expect(a.text).toMatch(/met .* at 65 °F/);
    expect(a.text).toMatch(/met .* at 40 °F/);
    expect(a.text).toContain("by cook");
    const bRow = r.rows.find((x) => x.id === b.b)!;
    expect(bRow.text).toContain("1 late");
    const cRow = r.rows.find((x) => x.id === b.c)!;
    expect(cRow.text).toContain(`manager ${t.people.manager.email.split(".")[1].split("@")[0]}`);
  });

  it("filters on the server: product, method, equipment, outcome, who entered, late entries, not signed", async () => {
    const apple = /<option value="([0-9a-f-]{36})">Apple compote<\/option>/.exec((await records(qa, site())).html)![1];
    expect((await records(qa, `${site()}?product=${apple}`)).ids).toEqual([b.b]);
    expect(sorted((await records(qa, `${site()}?method=blast-chiller`)).ids)).toEqual(sorted([b.b, b.d]));
    expect((await records(qa, `${site()}?equipment=${t.walkIn.id}`)).ids).toEqual([b.a]);
    expect((await records(qa, `${site()}?outcome=discarded`)).ids).toEqual([b.c]);
    expect((await records(qa, `${site()}?cook=${t.people.cook.id}`)).ids).toEqual([b.a]);
    expect((await records(qa, `${site()}?late=1`)).ids).toEqual([b.b]);
    const unsigned = await records(qa, `${site()}?unverified=1`);
    expect(sorted(unsigned.ids)).toEqual(sorted([b.a, b.b]));
    expect(unsigned.total("batches")).toBe("2");
    // Filters combine.
    expect((await records(qa, `${site()}?method=blast-chiller&outcome=cooling`)).ids).toEqual([b.d]);
  });

  it("sorts and pages on the server, and a date range reaches older batches", async () => {
    expect((await records(qa, `${site()}?sort=product&dir=asc`)).ids[0]).toBe(b.b);
    expect((await records(qa, `${site()}?sort=started&dir=asc`)).ids).toEqual([b.c, b.a, b.b, b.d]);
    const from = new Date(Date.now() - 12 * DAY * 60_000).toISOString().slice(0, 10);
    const to = new Date(Date.now() + DAY * 60_000).toISOString().slice(0, 10);
    const wide = await records(qa, `${site()}?from=${from}&to=${to}`);
    expect(sorted(wide.ids)).toEqual(sorted([b.a, b.b, b.c, b.d, b.e]));
    const far = await records(qa, `${site()}?page=99`);
    expect(far.html).toContain("There is no page 99");
    expect(far.ids).toHaveLength(4);
  });

  it("an unusable parameter falls back to its default and says so, keeping the rest", async () => {
    const r = await records(qa, `${site()}?outcome=melted&late=1&from=2026-02-30&to=2026-03-01`);
    expect(r.status).toBe(200);
    expect(r.html).toContain("Some of the address could not be used and was left out: the dates, outcome.");
    expect(r.ids).toEqual([b.b]);
  });

  it("who may look: QA and managers yes, cooks no, another organisation's site is not found", async () => {
    expect((await records(manager, site())).status).toBe(200);
    expect((await cook.get(site())).status).toBe(403);
    expect((await qa.get(`/sites/${other.site.id}/records`)).status).toBe(404);
    expect((await qa.get(`/sites/${site2.id}/records`)).status).toBe(200);
  });

  it("the organisation view covers every site where the user reads records, and only those", async () => {
    const all = await records(qa, "/records");
    expect(all.status).toBe(200);
    expect(sorted(all.ids)).toEqual(sorted([b.a, b.b, b.c, b.d, b.f]));
    expect(all.ids).not.toContain(b.foreign);
    expect(all.rows.find((r) => r.id === b.f)!.text).toContain("Commissary");
    expect((await records(qa, `/records?site=${site2.id}`)).ids).toEqual([b.f]);
    // Another organisation's site as a filter is left out, not obeyed.
    const foreign = await records(qa, `/records?site=${other.site.id}`);
    expect(foreign.html).toContain("left out: site");
    expect(foreign.ids).not.toContain(b.foreign);
    // The manager works at one site only.
    expect(sorted((await records(manager, "/records")).ids)).toEqual(sorted([b.a, b.b, b.c, b.d]));
    expect((await cook.get("/records")).status).toBe(403);
  });

  it("the print view lays out the period's log with the caution, and cuts a range longer than 31 days", async () => {
    const res = await qa.get(`/sites/${t.site.id}/records/print`);
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(html.split('data-testid="print-row"').length - 1).toBe(4);
    expect(html).toContain("The probe reading is the record");
    expect(html).toContain("Cooling log");
    expect(html).not.toContain('aria-label="Main menu"');
    const long = await (await qa.get(`/sites/${t.site.id}/records/print?from=2026-01-01&to=2026-03-31`)).text();
    expect(long.replace(/<!-- -->/g, "")).toContain("A printed log covers at most 31 days; showing 2026-01-01 to 2026-01-31.");
    expect((await cook.get(`/sites/${t.site.id}/records/print`)).status).toBe(403);
  });
});
