import { randomUUID } from "node:crypto";
import { and, eq, sql } from "drizzle-orm";
import { beforeAll, describe, expect, it } from "vitest";
import { addMembership, createEquipment, createProduct, createSite } from "~db/factories";
import { readings } from "~db/schema";
import { addReading, coolingBatch, endedBatch, minutesAgo } from "../helpers/batches";
import { signedIn, type Client } from "../helpers/client";
import { db, newTenant } from "../helpers/db";

type Tenant = Awaited<ReturnType<typeof newTenant>>;
type State = "cooled" | "cooled_after_reheat" | "discarded";
const MIN = 60_000;
const DAY = 86_400_000;
const ZONE = "America/Denver";

// Wall-clock arithmetic in the site's zone, written here apart from the app's own helpers.
const dateIn = (ms: number) => new Intl.DateTimeFormat("en-CA", { timeZone: ZONE }).format(ms);
const hourIn = (ms: number) => Number(new Intl.DateTimeFormat("en-GB", { timeZone: ZONE, hour: "2-digit", hourCycle: "h23" }).format(ms));
const addDays = (date: string, days: number) => new Date(Date.parse(`${date}T00:00:00Z`) + days * DAY).toISOString().slice(0, 10);
/** The instant a Denver clock shows `hour`:`minute` on `date` (Denver is UTC−7 or UTC−6). */
function denverAt(date: string, hour: number, minute = 0) {
  for (const offsetH of [7, 6]) {
    const t = Date.parse(`${date}T00:00:00Z`) + (hour + offsetH) * 3600_000 + minute * MIN;
    if (hourIn(t) === hour && dateIn(t) === date) return new Date(t);
  }
  throw new Error(`no instant shows ${date} ${hour}:${minute} in ${ZONE}`);
}

const text = (html: string) => html.replace(/<!-- -->/g, "").replace(/<[^>]+>/g, " ").replace(/&#x27;/g, "'").replace(/&amp;/g, "&").replace(/\s+/g, " ").trim();
/** The element with `data-testid` and everything up to its closing tag of the same name (no nesting of that tag inside). */
function byTestId(html: string, testId: string, tag: string) {
  const at = html.indexOf(`data-testid="${testId}"`);
  expect(at, testId).toBeGreaterThan(-1);
  const start = html.lastIndexOf(`<${tag}`, at);
  return html.slice(start, html.indexOf(`</${tag}>`, at) + tag.length + 3);
}
/** Each row of a numbers table: its header cell's text and its figures. */
function tableRows(html: string, testId: string) {
  const table = byTestId(html, testId, "table");
  return [...table.matchAll(/<tr[^>]*data-row="([^"]+)"[^>]*>([\s\S]*?)<\/tr>/g)].map((m) => ({
    key: m[1],
    head: text(/<th[^>]*>([\s\S]*?)<\/th>/.exec(m[2])![1]),
    cells: [...m[2].matchAll(/<td[^>]*>([\s\S]*?)<\/td>/g)].map((c) => text(c[1])),
  }));
}

async function page(c: Client, siteId: string, query = "") {
  const res = await c.get(`/sites/${siteId}/analytics${query}`);
  expect(res.status).toBe(200);
  return res.text();
}

/**
 * One ended batch. Readings after the 150 °F start: one at 140 °F ten minutes in (the clock starts
 * there: the last reading at or above 135 °F), then 65 °F `stageOneAfter` minutes after that; or, with
 * `stageOneAfter` null, a single 100 °F reading that never reaches 70 °F.
 */
type Spec = { product: "chili" | "rice" | "soup"; method: string; unit: "walkIn" | "blast" | null; hour: number; minute?: number; state: State; stageOneAfter: number | null; daysAgo?: number };

describe("analytics", () => {
  let t: Tenant;
  let qa: Client;
  let products: Record<Spec["product"], { id: string; name: string }>;
  let units: Record<"walkIn" | "blast", { id: string; name: string }>;
  const today = dateIn(Date.now());
  const day = addDays(today, -3);

  // Known outcomes across products, methods, units and shifts (hours on the Denver clock).
  const specs: Spec[] = [
    { product: "chili", method: "walk-in", unit: "walkIn", hour: 6, state: "cooled", stageOneAfter: 30 },
    { product: "chili", method: "walk-in", unit: "walkIn", hour: 7, state: "cooled", stageOneAfter: 45 },
    { product: "chili", method: "walk-in", unit: "walkIn", hour: 5, state: "cooled", stageOneAfter: 60 }, // 05:00 is the early shift
    { product: "chili", method: "walk-in", unit: "walkIn", hour: 12, minute: 59, state: "cooled_after_reheat", stageOneAfter: 150 },
    { product: "chili", method: "blast-chiller", unit: "blast", hour: 13, state: "cooled", stageOneAfter: 120 }, // 13:00 is the late shift; exactly 2 h is in time
    { product: "chili", method: "blast-chiller", unit: "blast", hour: 14, state: "cooled", stageOneAfter: 15 },
    { product: "rice", method: "blast-chiller", unit: "blast", hour: 15, state: "cooled", stageOneAfter: 16 },
    { product: "rice", method: "blast-chiller", unit: "blast", hour: 20, minute: 59, state: "discarded", stageOneAfter: null },
    { product: "rice", method: "walk-in", unit: "walkIn", hour: 21, state: "discarded", stageOneAfter: 121 }, // 21:00 is the night shift; 121 min is late
    { product: "rice", method: "walk-in", unit: null, hour: 23, state: "cooled", stageOneAfter: 90 },
    { product: "rice", method: "walk-in", unit: null, hour: 2, state: "cooled_after_reheat", stageOneAfter: 300 },
    { product: "rice", method: "ice-bath-stirred", unit: null, hour: 4, minute: 59, state: "cooled", stageOneAfter: 105 },
    { product: "soup", method: "ice-bath-stirred", unit: null, hour: 9, state: "discarded", stageOneAfter: null },
    { product: "soup", method: "ice-bath-stirred", unit: null, hour: 10, state: "cooled", stageOneAfter: 75 },
    { product: "soup", method: "walk-in", unit: "walkIn", hour: 16, state: "cooled", stageOneAfter: 100 },
  ];

  beforeAll(async () => {
    t = await newTenant();
    qa = await signedIn(t.people.qa.email, t.people.qa.password);
    const composition = { water: 80, protein: 5, fat: 3, carbohydrate: 10, fibre: 1, ash: 1 };
    products = {
      chili: t.product,
      rice: await createProduct(db, { siteId: t.site.id, name: "Steamed rice", composition }),
      soup: await createProduct(db, { siteId: t.site.id, name: "Lentil soup", composition }),
    };
    units = { walkIn: t.walkIn, blast: await createEquipment(db, { siteId: t.site.id, name: "Blast chiller 2", method: "blast-chiller" }) };
    for (const [i, s] of specs.entries()) {
      const startedAt = denverAt(day, s.hour, s.minute ?? 0);
      const b = await endedBatch(t, {
        lotCode: `AN-${i}`,
        productId: products[s.product].id,
        method: s.method,
        equipmentId: s.unit ? units[s.unit].id : null,
        state: s.state,
        startedAt,
        endedAt: new Date(startedAt.getTime() + 7 * 3600_000),
      });
      const at = (m: number) => new Date(startedAt.getTime() + m * MIN);
      if (s.stageOneAfter === null) {
        await addReading(t, b.id, 100, at(60));
      } else {
        await addReading(t, b.id, 140, at(10));
        await addReading(t, b.id, 65, at(10 + s.stageOneAfter));
      }
    }
    // Outside the default period (ended 100 days ago), and still cooling: neither counts.
    await endedBatch(t, { lotCode: "OLD-1", state: "discarded", startedAt: minutesAgo(100 * 24 * 60 + 400), endedAt: minutesAgo(100 * 24 * 60) });
    await coolingBatch(t, { lotCode: "NOW-1" });
  });

  const expected = (keep: (s: Spec) => boolean) => {
    const group = specs.filter(keep);
    const passed = group.filter((s) => s.state === "cooled").length;
    return { ended: group.length, passed };
  };
  const shiftOf = (h: number) => (h >= 5 && h < 13 ? "early" : h >= 13 && h < 21 ? "late" : "night");

  it("shows the period's pass rate with the counts, by product, method, unit and shift", async () => {
    const html = await page(qa, t.site.id);
    const all = expected(() => true);
    expect(all).toEqual({ ended: 15, passed: 10 });
    expect(text(byTestId(html, "analytics-pass", "div"))).toContain(`${Math.round((all.passed / all.ended) * 100)} %`);
    expect(text(byTestId(html, "analytics-pass", "div"))).toContain(`${all.passed} of ${all.ended} ended batches cooled first time`);

    const checks: [string, { key: string; label: string; keep: (s: Spec) => boolean }[]][] = [
      ["rate-product", (["chili", "rice", "soup"] as const).map((p) => ({ key: products[p].id, label: products[p].name, keep: (s: Spec) => s.product === p }))],
      [
        "rate-method",
        [
          { key: "walk-in", label: "Walk-in cooler, still air", keep: (s: Spec) => s.method === "walk-in" },
          { key: "blast-chiller", label: "Blast chiller", keep: (s: Spec) => s.method === "blast-chiller" },
          { key: "ice-bath-stirred", label: "Ice-water bath, food stirred", keep: (s: Spec) => s.method === "ice-bath-stirred" },
        ],
      ],
      [
        "rate-equipment",
        [
          { key: units.walkIn.id, label: units.walkIn.name, keep: (s: Spec) => s.unit === "walkIn" },
          { key: units.blast.id, label: units.blast.name, keep: (s: Spec) => s.unit === "blast" },
          { key: "none", label: "No unit recorded", keep: (s: Spec) => s.unit === null },
        ],
      ],
      [
        "rate-shift",
        [
          { key: "early", label: "Early shift 05:00–13:00", keep: (s: Spec) => shiftOf(s.hour) === "early" },
          { key: "late", label: "Late shift 13:00–21:00", keep: (s: Spec) => shiftOf(s.hour) === "late" },
          { key: "night", label: "Night shift 21:00–05:00", keep: (s: Spec) => shiftOf(s.hour) === "night" },
        ],
      ],
    ];
    for (const [testId, groups] of checks) {
      const rows = tableRows(html, `${testId}-table`);
      const chart = text(byTestId(html, testId, "svg"));
      expect(rows.map((r) => r.key).sort(), testId).toEqual(groups.map((g) => g.key).sort());
      for (const g of groups) {
        const { ended, passed } = expected(g.keep);
        const row = rows.find((r) => r.key === g.key)!;
        const few = ended < 5;
        expect(row.head, `${testId} ${g.label}`).toBe(few ? `${g.label} too few to judge` : g.label);
        expect(row.cells, `${testId} ${g.label}`).toEqual([String(ended), String(passed), String(ended - passed), `${Math.round((passed / ended) * 100)} %`]);
        // The bar carries the same count, and the small groups are marked on the chart too.
        expect(chart).toContain(`${passed} of ${ended} · ${Math.round((passed / ended) * 100)} %`);
        if (few) expect(chart).toContain(`${g.label} · too few to judge`);
      }
    }
  });

  it("bins the time from the clock start to the first reading at or below 70 °F, marks the 2 h limit, and counts the batches that never got there", async () => {
    const html = await page(qa, t.site.id);
    const times = specs.map((s) => s.stageOneAfter).filter((m): m is number => m !== null);
    const rows = tableRows(html, "stage-one-histogram-table");
    expect(rows).toHaveLength(17);
    // Bins of 15 min holding (from, to]; the last holds everything over 4 h.
    for (const [i, row] of rows.entries()) {
      const lo = i * 15;
      const count = i < 16 ? times.filter((m) => (i === 0 ? m >= 0 : m > lo) && m <= lo + 15).length : times.filter((m) => m > 240).length;
      expect(row.cells, `bin ${i} (${row.head})`).toEqual([String(count)]);
    }
    expect(rows[0].head).toBe("Up to 15 min");
    expect(rows[6].head).toBe("More than 1 h 30 min, up to 1 h 45 min");
    expect(rows[6].cells).toEqual(["2"]); // 100 and 105 min
    expect(rows[7].head).toBe("More than 1 h 45 min, up to 2 h");
    expect(rows[7].cells).toEqual(["1"]); // exactly 2 h: in time, so in the last bin up to the limit
    expect(rows[16].head).toBe("More than 4 h");
    const chart = text(byTestId(html, "stage-one-histogram", "svg"));
    expect(chart).toContain("Stage-1 limit: 2 h");

    const never = specs.filter((s) => s.stageOneAfter === null).length;
    expect(text(byTestId(html, "stage-one-never", "p"))).toBe(`${never} ended batches never had a reading at or below 70 °F (not in the chart).`);
    const within = times.filter((m) => m <= 120).length;
    expect(text(byTestId(html, "analytics-within", "div"))).toContain(`${within} of ${specs.length} ended batches within 2 h`);
    const sorted = [...times].sort((a, b) => a - b);
    const mid = sorted.length / 2;
    const median = sorted.length % 2 ? sorted[Math.floor(mid)] : (sorted[mid - 1] + sorted[mid]) / 2;
    expect(median).toBe(90);
    expect(text(byTestId(html, "analytics-median", "div"))).toContain("1 h 30 min");
    expect(text(byTestId(html, "analytics-median", "div"))).toContain(`${never} batches never reached it`);
  });

  it("ranks the products and methods that fail most, by failures and then their share", async () => {
    const html = await page(qa, t.site.id);
    const ranked = (key: (s: Spec) => string) => {
      const groups = new Map<string, { failed: number; ended: number }>();
      for (const s of specs) {
        const g = groups.get(key(s)) ?? { failed: 0, ended: 0 };
        g.ended++;
        if (s.state !== "cooled") g.failed++;
        groups.set(key(s), g);
      }
      return [...groups].filter(([, g]) => g.failed > 0).sort(([, a], [, b]) => b.failed - a.failed || b.failed / b.ended - a.failed / a.ended);
    };
    const list = (testId: string) => [...byTestId(html, testId, "ol").matchAll(/<li[^>]*data-group="([^"]+)"[^>]*>([\s\S]*?)<\/li>/g)].map((m) => ({ key: m[1], text: text(m[2]) }));
    const byProduct = ranked((s) => products[s.product].id);
    expect(list("fail-products").map((r) => r.key)).toEqual(byProduct.map(([k]) => k));
    // Rice: 3 of 6 failed; then soup, 1 of 3, before chili, 1 of 6.
    expect(list("fail-products").map((r) => r.key)).toEqual([products.rice.id, products.soup.id, products.chili.id]);
    expect(list("fail-products")[0].text).toContain("3 failed of 6 (50 %)");
    expect(list("fail-products")[1].text).toContain("too few to judge");
    const byMethod = ranked((s) => s.method);
    expect(list("fail-methods").map((r) => r.key)).toEqual(byMethod.map(([k]) => k));
  });

  it("times stage 1 on the corrected value when a reading was corrected, and counts a batch with no reading below the limit apart", async () => {
    const u = await newTenant();
    const startedAt = minutesAgo(24 * 60);
    const at = (m: number) => new Date(startedAt.getTime() + m * MIN);
    const b = await endedBatch(u, { state: "cooled", startedAt, endedAt: at(360) });
    await addReading(u, b.id, 140, at(10));
    await addReading(u, b.id, 68, at(40)); // mistyped: it was 72 °F
    await addReading(u, b.id, 66, at(100));
    const [typo] = await db.select().from(readings).where(and(eq(readings.batchId, b.id), eq(readings.valueEntered, 68)));
    await db.insert(readings).values({ ...typo, id: undefined, clientId: randomUUID(), valueEntered: 72, valueC: ((72 - 32) * 5) / 9, receivedAt: at(45), correctsReadingId: typo.id, correctionReason: "Mistyped" });
    // Started at 150 °F and never read again: the clock started, stage 1 was never reached.
    await endedBatch(u, { state: "discarded", startedAt, endedAt: at(300) });
    const manager = await signedIn(u.people.manager.email, u.people.manager.password);
    const html = await page(manager, u.site.id);
    const rows = tableRows(html, "stage-one-histogram-table");
    // 90 min from the clock start at 140 °F to the 66 °F reading: the bin over 75 up to 90 min.
    expect(rows.map((r) => r.cells[0]).join(",")).toBe(["0", "0", "0", "0", "0", "1", ...Array(11).fill("0")].join(","));
    expect(text(byTestId(html, "stage-one-never", "p"))).toBe("1 ended batch never had a reading at or below 70 °F (not in the chart).");
  });

  it("says in plain words how the figures are counted and that they come from the probe readings", async () => {
    const html = await page(qa, t.site.id);
    const defs = text(byTestId(html, "analytics-definitions", "dl"));
    expect(defs).toContain("Pass: the batch cooled the first time. Fail: it cooled only after a reheat, or it was discarded.");
    expect(defs).toContain("Early shift 05:00–13:00; Late shift 13:00–21:00; Night shift 21:00–05:00");
    expect(defs).toContain("first probe reading at or below 70 °F");
    expect(text(byTestId(html, "analytics-source", "p"))).toContain("come from the probe readings");
  });

  it("falls back to the last 12 weeks with a note when a date cannot be used", async () => {
    const from = addDays(today, -83);
    const cases: [string, string][] = [
      ["?from=2025-13-45", "Could not use the start date: showing the last 12 weeks instead. Give dates as YYYY-MM-DD, and real days."],
      [`?from=${today}&to=${addDays(today, -5)}`, "Could not use the start date, the end date: showing the last 12 weeks instead. The start date was after the end date."],
      [`?from=${addDays(today, -400)}&to=${today}`, "Could not use the start date, the end date: showing the last 12 weeks instead. A period covers at most a year (366 days)."],
      ["?scope=everything", "Could not use the view asked for: showing the last 12 weeks instead."],
    ];
    for (const [query, note] of cases) {
      const html = await page(qa, t.site.id, query);
      expect(text(byTestId(html, "analytics-ignored", "span")), query).toBe(note);
      expect(text(byTestId(html, "analytics-period", "p")), query).toContain(`from ${from} to ${today}`);
      expect(text(byTestId(html, "analytics-pass", "div")), query).toContain("10 of 15");
    }
    // A usable period has no note, and counts only what ended in it.
    const narrow = await page(qa, t.site.id, `?from=${addDays(today, -200)}&to=${addDays(today, -50)}`);
    expect(narrow).not.toContain('data-testid="analytics-ignored"');
    expect(text(byTestId(narrow, "analytics-pass", "div"))).toContain("0 of 1");
  });

  it("agrees with the manager's home on this week's pass rate", async () => {
    const u = await newTenant();
    const monday = new Date((await db.execute<{ at: string }>(sql`select (date_trunc('week', now() at time zone ${ZONE}) at time zone ${ZONE}) as at`)).rows[0].at);
    const ends: State[] = ["cooled", "cooled", "cooled_after_reheat", "discarded", "cooled"];
    for (const [i, state] of ends.entries()) {
      const endedAt = new Date(Math.min(Date.now() - MIN, monday.getTime() + (i + 1) * 20 * MIN));
      await endedBatch(u, { state, endedAt, startedAt: new Date(endedAt.getTime() - 3 * 3600_000) });
    }
    await endedBatch(u, { state: "cooled", endedAt: new Date(monday.getTime() - 30 * MIN), startedAt: new Date(monday.getTime() - 300 * MIN) });
    const manager = await signedIn(u.people.manager.email, u.people.manager.password);
    const home = text(byTestId(await (await manager.get(`/sites/${u.site.id}`)).text(), "glance-pass", "div"));
    const week = text(byTestId(await page(manager, u.site.id, `?from=${dateIn(monday.getTime())}&to=${today}`), "analytics-pass", "div"));
    expect(home).toContain("3 of 5 batches that ended since Monday");
    expect(week).toContain("60 %");
    expect(week).toContain("3 of 5 ended batches");
  });

  it("is QA's, the managers' and the admins': a cook is refused and another organisation's site is not found", async () => {
    const cook = await signedIn(t.people.cook.email, t.people.cook.password);
    expect((await cook.get(`/sites/${t.site.id}/analytics`)).status).toBe(403);
    const other = await newTenant();
    expect((await qa.get(`/sites/${other.site.id}/analytics`)).status).toBe(404);
    expect((await qa.get(`/sites/${other.site.id}/analytics?scope=all`)).status).toBe(404);
    expect((await qa.get(`/sites/not-a-site/analytics`)).status).toBe(404);
    for (const role of ["manager", "admin"] as const) {
      const c = await signedIn(t.people[role].email, t.people[role].password);
      expect((await c.get(`/sites/${t.site.id}/analytics`)).status).toBe(200);
    }
  });

  it("compares only the sites of the organisation where the user is QA lead or administrator", async () => {
    const u = await newTenant();
    const second = await createSite(db, { organisationId: u.org.id, name: `Annex ${u.site.name}`, timeZone: "Pacific/Kiritimati", temperatureUnit: "F", ruleSetCode: "fda-3-501.14-a" });
    const cookOnly = await createSite(db, { organisationId: u.org.id, name: `Bakery ${u.site.name}`, timeZone: ZONE, temperatureUnit: "F", ruleSetCode: "fda-3-501.14-a" });
    await addMembership(db, u.people.qa.id, second.id, "qa");
    await addMembership(db, u.people.qa.id, cookOnly.id, "cook");
    const other = await newTenant();
    const annexProduct = await createProduct(db, { siteId: second.id, name: "Annex stew", composition: { water: 80, protein: 8, fat: 4, carbohydrate: 8 } });
    const annex = { ...u, site: second, product: annexProduct };
    for (const state of ["cooled", "discarded", "discarded"] as const) await endedBatch(annex, { state, endedAt: minutesAgo(60), startedAt: minutesAgo(400) });
    await endedBatch(u, { state: "cooled", endedAt: minutesAgo(30), startedAt: minutesAgo(300) });
    await endedBatch({ ...u, site: cookOnly }, { state: "cooled", endedAt: minutesAgo(30), startedAt: minutesAgo(300) });
    await endedBatch(other, { state: "cooled", endedAt: minutesAgo(30), startedAt: minutesAgo(300) });

    const c = await signedIn(u.people.qa.email, u.people.qa.password);
    const single = await page(c, u.site.id);
    expect(single).toContain(`href="/sites/${u.site.id}/analytics?scope=all"`);
    // A period chosen goes along to the comparison.
    expect(await page(c, u.site.id, `?from=${addDays(today, -7)}&to=${today}`)).toContain(`href="/sites/${u.site.id}/analytics?scope=all&amp;from=${addDays(today, -7)}&amp;to=${today}"`);
    const html = await page(c, u.site.id, "?scope=all");
    // UTC+14 is most often a day ahead of Denver: by default the comparison runs to the latest today.
    const kiritimatiToday = new Intl.DateTimeFormat("en-CA", { timeZone: "Pacific/Kiritimati" }).format(Date.now());
    expect(text(byTestId(html, "analytics-period", "p"))).toContain(`from ${addDays(kiritimatiToday, -83)} to ${kiritimatiToday}`);
    const rows = tableRows(html, "sites-table");
    expect(rows.map((r) => r.key)).toEqual([second.id, u.site.id]); // by name: "Annex …" before "Kitchen …"
    expect(rows[0].cells.slice(0, 2)).toEqual(["3", "33 %"]);
    expect(rows[1].cells.slice(0, 2)).toEqual(["1", "100 %"]);
    // The shell's site switcher names every site of the user; the comparison only the QA ones.
    const compared = byTestId(html, "rate-site", "figure") + byTestId(html, "sites-table", "table");
    for (const hidden of [cookOnly.id, cookOnly.name, other.site.id]) expect(compared).not.toContain(hidden);
    expect(html).not.toContain(other.site.name);
    expect(text(byTestId(html, "rate-site", "svg"))).toContain("1 of 3 · 33 %");

    // A manager does not compare sites; a QA lead of one site is not offered it.
    const manager = await signedIn(u.people.manager.email, u.people.manager.password);
    expect((await manager.get(`/sites/${u.site.id}/analytics?scope=all`)).status).toBe(403);
    expect(await page(qa, t.site.id)).not.toContain("scope=all");
  });
});
