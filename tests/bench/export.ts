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

const { MAX_PICTURES } = await import("~/server/export.server");
await measure(`workbook (.xlsx, ${MAX_PICTURES} curves)`, () => exportWorkbook(t.site, exporter, range));

// One batch's picture as the Curves sheet makes it: the assessment from its rows, the chart's series, SVG, PNG.
{
  const { assessRows } = await import("~/server/batches.server");
  const { chartSeries } = await import("~/server/batch-view.server");
  const { curvePng } = await import("~/server/curve-picture.server");
  const { products } = await import("~db/schema");
  const [b] = await db.select().from(batches).where(eq(batches.siteId, t.site.id)).limit(1);
  const [product] = await db.select().from(products).where(eq(products.id, b.productId));
  const rs = await db.select().from(readings).where(eq(readings.batchId, b.id));
  const row = { batch: b, product, learnedLnS: null, learnedSd: null, learnedBatches: null };
  const labels = { title: "", timeAxis: "Time", temperatureAxis: "Core temperature", reading: "Probe reading", late: "late", corrected: "corrected", predicted: "Model estimate", band: "Likely range", now: "ended", deadline: "Deadline", dangerZone: "Danger zone", summaryReadings: "", summaryNoReadings: "", summaryPrediction: "" };
  const N = 30;
  let assessMs = 0;
  let bytes = 0;
  const start = performance.now();
  for (let i = 0; i < N; i++) {
    const a0 = performance.now();
    const a = assessRows(t.site, row, rs, Date.now());
    const record = rs.map((r) => ({ t: r.takenAt.getTime(), c: r.valueC }));
    const series = chartSeries(a, record, b.endedAt!.getTime());
    assessMs += performance.now() - a0;
    const png = await curvePng({ readings: record, predicted: series.predicted, band: series.band, stages: series.stages, startedAt: b.startedAt.getTime(), now: b.endedAt!.getTime(), unit: t.site.temperatureUnit, timeZone: t.site.timeZone, labels });
    bytes += png.length;
  }
  const per = (performance.now() - start) / N;
  console.log(`${"one batch's curve".padEnd(28)} ${per.toFixed(0)} ms a picture (assessment and series ${(assessMs / N).toFixed(0)} ms), ${(bytes / N / 1024).toFixed(0)} KB`);
}
await measure("readings CSV", () => exportCsv(t.site, exporter, range, "readings"));
await pool.end();
const { pool: appPool } = await import("~/server/db.server");
await appPool.end();
