// The records export's memory on a large period: seeds a site with 5,000 batches and 50,000 readings
// into DATABASE_URL (a scratch or test database: the rows stay), streams the workbook and the
// readings CSV to nowhere, and prints the peak RSS and heap. A figure, not pass/fail.
//   DATABASE_URL=postgres://… npx tsx tests/bench/export.ts [batches] [readings per batch]
import { randomUUID } from "node:crypto";

process.env.AUTH_SECRET ??= "bench-only-secret-bench-only-secret-0123";
const BATCHES = Number(process.argv[2] ?? 5000);
const PER_BATCH = Number(process.argv[3] ?? 10);

const { connect } = await import("~db/connect");
const { createTenant } = await import("~db/factories");
const { batches, readings, users } = await import("~db/schema");
const { eq } = await import("drizzle-orm");
const { db, pool } = connect(process.env.DATABASE_URL);

const tag = randomUUID().slice(0, 8);
const t = await createTenant(db, `bench-${tag}`);
const t0 = Date.now();
const weekStart = Date.now() - 7 * 86_400_000;
for (let from = 0; from < BATCHES; from += 1000) {
  const rows = Array.from({ length: Math.min(1000, BATCHES - from) }, (_, k) => ({
    siteId: t.site.id,
    clientId: randomUUID(),
    productId: t.product.id,
    lotCode: `B-${from + k}`,
    panSize: "gn-1/1",
    panDepthMm: 65,
    fillDepthMm: 50,
    method: "walk-in",
    ruleSetCode: t.site.ruleSetCode,
    startedAt: new Date(weekStart + ((from + k) * 6 * 86_400_000) / BATCHES),
    startedBy: t.people.cook.id,
    state: "cooled" as const,
    endedAt: new Date(weekStart + ((from + k) * 6 * 86_400_000) / BATCHES + 5 * 3600_000),
  }));
  const made = await db.insert(batches).values(rows).returning({ id: batches.id, startedAt: batches.startedAt });
  const rs = made.flatMap((b) =>
    Array.from({ length: PER_BATCH }, (_, i) => {
      const f = 150 - (110 * i) / Math.max(PER_BATCH - 1, 1);
      return {
        batchId: b.id,
        siteId: t.site.id,
        clientId: randomUUID(),
        valueEntered: Math.round(f * 10) / 10,
        unitEntered: "F" as const,
        valueC: ((f - 32) * 5) / 9,
        takenAt: new Date(b.startedAt.getTime() + i * 30 * 60_000),
        receivedAt: new Date(b.startedAt.getTime() + i * 30 * 60_000 + 5000),
        late: false,
        enteredBy: t.people.cook.id,
        source: "station" as const,
      };
    }),
  );
  for (let i = 0; i < rs.length; i += 4000) await db.insert(readings).values(rs.slice(i, i + 4000));
}
console.log(`seeded ${BATCHES} batches, ${BATCHES * PER_BATCH} readings in ${((Date.now() - t0) / 1000).toFixed(1)} s`);

const { exportCsv, exportWorkbook } = await import("~/server/export.server");
const { lastWeek } = await import("~/lib/records-export");
const [qa] = await db.select().from(users).where(eq(users.id, t.people.qa.id));
const range = { from: lastWeek(t.site.timeZone).from, to: new Date().toISOString().slice(0, 10) };
const exporter = { id: qa.id, name: qa.name, email: qa.email, language: qa.language };

async function measure(label: string, make: () => Promise<Response>) {
  global.gc?.();
  const base = process.memoryUsage();
  let peakRss = base.rss;
  let peakHeap = base.heapUsed;
  const timer = setInterval(() => {
    const m = process.memoryUsage();
    peakRss = Math.max(peakRss, m.rss);
    peakHeap = Math.max(peakHeap, m.heapUsed);
  }, 10);
  const start = performance.now();
  const res = await make();
  let bytes = 0;
  for await (const chunk of res.body as unknown as AsyncIterable<Uint8Array>) bytes += chunk.length;
  clearInterval(timer);
  const mb = (n: number) => `${(n / 1048576).toFixed(0)} MB`;
  console.log(
    `${label.padEnd(28)} ${((performance.now() - start) / 1000).toFixed(1)} s, ${mb(bytes)} written; RSS ${mb(base.rss)} → peak ${mb(peakRss)}, heap used ${mb(base.heapUsed)} → peak ${mb(peakHeap)}`,
  );
}

await measure("workbook (.xlsx)", () => exportWorkbook(t.site, exporter, range));
await measure("readings CSV", () => exportCsv(t.site, exporter, range, "readings"));
await pool.end();
const { pool: appPool } = await import("~/server/db.server");
await appPool.end();
