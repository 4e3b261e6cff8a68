// QA's analytics on a busy site's year: seeds a site with 5,000 ended batches (10 readings each, spread
// over 360 days, three products, three methods, every hour of the day) into DATABASE_URL (a scratch or
// test database: the rows stay), then times the page's data (the grouped counts in PostgreSQL and the
// stage-1 time of every batch from its readings) and, when an app answers at APP_URL, the page itself
// as the site's QA lead opens it. A figure, not pass/fail.
//   DATABASE_URL=postgres://… [APP_URL=http://127.0.0.1:3101] npx tsx tests/bench/analytics.ts [batches] [readings per batch]
import { randomUUID } from "node:crypto";

process.env.AUTH_SECRET ??= "bench-only-secret-bench-only-secret-0123";
const BATCHES = Number(process.argv[2] ?? 5000);
const PER_BATCH = Number(process.argv[3] ?? 10);
const DAY = 86_400_000;

const { connect } = await import("~db/connect");
const { createEquipment, createProduct, createTenant } = await import("~db/factories");
const { batches, readings } = await import("~db/schema");
const { db, pool } = connect(process.env.DATABASE_URL);

const tag = randomUUID().slice(0, 8);
const t = await createTenant(db, `bench-${tag}`);
const composition = { water: 80, protein: 5, fat: 3, carbohydrate: 10, fibre: 1, ash: 1 };
const products = [t.product, await createProduct(db, { siteId: t.site.id, name: "Rice", composition }), await createProduct(db, { siteId: t.site.id, name: "Soup", composition })];
const units = [t.walkIn, await createEquipment(db, { siteId: t.site.id, name: "Blast", method: "blast-chiller" }), null];
const methods = ["walk-in", "blast-chiller", "ice-bath-stirred"];
const states = ["cooled", "cooled", "cooled", "cooled", "cooled_after_reheat", "discarded"] as const;
const t0 = Date.now();
const yearStart = Date.now() - 360 * DAY;
for (let from = 0; from < BATCHES; from += 1000) {
  const rows = Array.from({ length: Math.min(1000, BATCHES - from) }, (_, j) => {
    const k = from + j;
    const startedAt = new Date(yearStart + (k * 359 * DAY) / BATCHES + (k % 24) * 3600_000);
    return {
      siteId: t.site.id,
      clientId: randomUUID(),
      productId: products[k % 3].id,
      lotCode: `B-${k}`,
      panSize: "gn-1/1",
      panDepthMm: 65,
      fillDepthMm: 50,
      method: methods[(k >> 1) % 3],
      equipmentId: units[(k >> 2) % 3]?.id ?? null,
      ruleSetCode: t.site.ruleSetCode,
      startedAt,
      startedBy: t.people.cook.id,
      state: states[k % states.length],
      endedAt: new Date(startedAt.getTime() + 6 * 3600_000),
    };
  });
  const made = await db.insert(batches).values(rows).returning({ id: batches.id, startedAt: batches.startedAt });
  const rs = made.flatMap((b, j) =>
    Array.from({ length: PER_BATCH }, (_, i) => {
      // 150 °F down to 40 °F; a batch in five cools slower and reaches 70 °F late.
      const f = 150 - (110 * i) / Math.max(PER_BATCH - 1, 1);
      const stepMin = (from + j) % 5 === 0 ? 45 : 25;
      return {
        batchId: b.id,
        siteId: t.site.id,
        clientId: randomUUID(),
        valueEntered: Math.round(f * 10) / 10,
        unitEntered: "F" as const,
        valueC: ((f - 32) * 5) / 9,
        takenAt: new Date(b.startedAt.getTime() + i * stepMin * 60_000),
        receivedAt: new Date(b.startedAt.getTime() + i * stepMin * 60_000 + 5000),
        late: false,
        enteredBy: t.people.cook.id,
        source: "station" as const,
      };
    }),
  );
  for (let i = 0; i < rs.length; i += 4000) await db.insert(readings).values(rs.slice(i, i + 4000));
}
console.log(`seeded ${BATCHES} batches, ${BATCHES * PER_BATCH} readings in ${((Date.now() - t0) / 1000).toFixed(1)} s`);

const { getSiteAnalytics } = await import("~/server/analytics.server");
const { localDateOf } = await import("~/lib/records-export");
const period = { from: localDateOf(yearStart - DAY, t.site.timeZone), to: localDateOf(Date.now(), t.site.timeZone) };
for (let run = 1; run <= 3; run++) {
  const start = performance.now();
  const a = await getSiteAnalytics(t.site, period);
  console.log(`analytics data, run ${run}: ${(performance.now() - start).toFixed(0)} ms (${a.overall.ended} ended, ${a.stageOne.timed} timed, ${a.stageOne.reached} reached stage 1)`);
}

if (process.env.APP_URL) {
  const { signedIn } = await import("../helpers/client");
  const qa = await signedIn(t.people.qa.email, t.people.qa.password);
  for (let run = 1; run <= 3; run++) {
    const start = performance.now();
    const res = await qa.get(`/sites/${t.site.id}/analytics?from=${period.from}&to=${period.to}`);
    const html = await res.text();
    console.log(`analytics page over HTTP, run ${run}: ${res.status}, ${(performance.now() - start).toFixed(0)} ms, ${(html.length / 1024).toFixed(0)} kB`);
  }
}
await pool.end();
const { pool: appPool } = await import("~/server/db.server");
await appPool.end();
