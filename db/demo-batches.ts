// `npm run demo` adds a morning's batches at Harbor Street Commissary when it has none from the last
// 8 hours, through the app's own record functions (so the queue, the home and the alerts show real
// assessments): one going badly in the walk-in, one on course in the blast chiller, one cooled and
// waiting for a signature, one that missed stage 1 and was discarded. Invented data, like the rest.
import { randomUUID } from "node:crypto";
import { and, eq, gt } from "drizzle-orm";
import { recordReading, StartBatchSchema, startBatch, takeCorrectiveAction, type Entrant } from "~/server/batches.server";
import { db, pool } from "~/server/db.server";
import { demoUsers } from "./demo";
import { batches, equipment, products, sites, users } from "./schema";

const MIN = 60_000;
const [site] = await db.select().from(sites).where(eq(sites.name, "Harbor Street Commissary"));
if (!site) process.exit(0);
const recent = await db.select({ id: batches.id }).from(batches).where(and(eq(batches.siteId, site.id), gt(batches.startedAt, new Date(Date.now() - 8 * 60 * MIN)))).limit(1);
if (recent.length) {
  console.log("  today's demo batches already present");
  await pool.end();
  process.exit(0);
}
const [cook] = await db.select().from(users).where(eq(users.email, demoUsers.find((u) => u.site === "harbor" && u.role === "cook")!.email));
const who: Entrant = { actor: { kind: "user", userId: cook.id }, userId: cook.id, source: "web" };
const product = async (name: string) => (await db.select().from(products).where(and(eq(products.siteId, site.id), eq(products.name, name))))[0];
const unit = async (name: string) => (await db.select().from(equipment).where(and(eq(equipment.siteId, site.id), eq(equipment.name, name))))[0];
const at = (minutesAgo: number) => new Date(Date.now() - minutesAgo * MIN).toISOString();

async function batch(p: string, lotCode: string, { lid = false, ...pan }: { size: string; depthMm: number; fillDepthMm: number; lid?: boolean }, method: string, eqName: string, readings: [number, number][]) {
  const [first, ...rest] = readings;
  const input = StartBatchSchema.parse({ clientId: randomUUID(), productId: (await product(p)).id, lotCode, pan, lid, method, equipmentId: (await unit(eqName)).id, start: { value: first[1], unit: "F", takenAt: at(first[0]) } });
  const started = await startBatch(site, who, input);
  if (!started.ok) throw new Error(`demo batch ${lotCode}: ${JSON.stringify(started.errors)}`);
  for (const [ago, value] of rest) await recordReading(site, who, started.value.id, { clientId: randomUUID(), value, unit: "F", takenAt: at(ago), kind: "reading" });
  return started.value.id;
}

await batch("Smoky black-bean chili", "HS-1201-A", { size: "gn-1/1", depthMm: 150, fillDepthMm: 130, lid: true }, "walk-in", "Walk-in cooler", [[70, 152], [40, 138], [12, 127]]);
await batch("Coconut jasmine rice", "HS-1201-B", { size: "gn-1/1", depthMm: 65, fillDepthMm: 40 }, "blast-chiller", "Blast chiller by the pass", [[45, 146], [20, 96]]);
await batch("Roasted tomato bisque", "HS-1201-C", { size: "gn-1/1", depthMm: 100, fillDepthMm: 60 }, "ice-bath-stirred", "Ice-bath sink", [[300, 160], [250, 104], [215, 66], [120, 47], [60, 40]]);
const missed = await batch("Braised chicken thighs", "HS-1201-D", { size: "gn-1/2", depthMm: 100, fillDepthMm: 90, lid: true }, "walk-in", "Walk-in cooler", [[420, 150], [330, 112], [290, 96]]);
await takeCorrectiveAction(site, who, missed, { kind: "discard", clientId: randomUUID(), quantityKg: 4.5, reason: "Missed stage 1 in the walk-in; not reheated" });
console.log("  today's demo batches added at Harbor Street Commissary");
await pool.end();
