// The kitchen the server bench loads: an invented site with 200 batches cooling (readings inserted
// as tests/helpers/batches.ts does, then settled by the app's own settleState so the derived columns
// are the engine's), a week of ended batches for the export, a site API token for the tablets' reading
// POSTs, a station device for the live view and a second site whose ended batches take the bare INSERTs.
// Loaded after the environment is checked: the app's modules read it when they load.
import { randomUUID } from "node:crypto";
import { connect } from "~db/connect";
import { createTenant } from "~db/factories";
import { eq } from "drizzle-orm";
import { batches, readings, sites, stationDevices } from "~db/schema";
import { localDateOf } from "~/lib/records-export";
import { createApiToken } from "~/server/api-tokens.server";
import { settleState } from "~/server/batches.server";
import { hashToken, makeToken } from "~/server/crypto.server";
import type { SessionUser } from "~/server/guards.server";

const MIN = 60_000;
const DAY = 86_400_000;
export const { db, pool } = connect(process.env.DATABASE_URL, 4);

type Tenant = Awaited<ReturnType<typeof createTenant>>;
const fToC = (f: number) => ((f - 32) * 5) / 9;

// A shallow pan in a blast chiller, as the tests' "ahead" setup: the batches stay on course.
const blastChiller = { panSize: "gn-1/1", panDepthMm: 65, fillDepthMm: 25, lid: false, method: "blast-chiller" } as const;

function batchRow(t: Tenant, lotCode: string, startedAt: Date) {
  return { siteId: t.site.id, clientId: randomUUID(), productId: t.product.id, lotCode, ruleSetCode: t.site.ruleSetCode, startedAt, startedBy: t.people.cook.id, ...blastChiller };
}

function readingRow(t: Tenant, batchId: string, valueF: number, takenAt: Date) {
  return { batchId, siteId: t.site.id, clientId: randomUUID(), valueEntered: valueF, unitEntered: "F" as const, valueC: fToC(valueF), takenAt, receivedAt: takenAt, late: false, source: "station" as const, enteredBy: t.people.cook.id };
}

/** Batches still cooling: a start reading at 150 °F and one every 6 minutes since, each settled by the app. */
async function coolingBatches(t: Tenant, count: number, now: number) {
  const made = await db
    .insert(batches)
    .values(Array.from({ length: count }, (_, i) => batchRow(t, `C-${i}`, new Date(now - (20 + (i % 30)) * MIN))))
    .returning({ id: batches.id, startedAt: batches.startedAt });
  const rows = made.flatMap((b) => {
    const list = [readingRow(t, b.id, 150, b.startedAt)];
    for (let k = 1; b.startedAt.getTime() + k * 6 * MIN < now; k++) list.push(readingRow(t, b.id, 150 - 8 * k, new Date(b.startedAt.getTime() + k * 6 * MIN)));
    return list;
  });
  await db.insert(readings).values(rows);
  for (const b of made) await settleState(t.site, b.id, now);
  return { ids: made.map((b) => b.id), readings: rows.length };
}

/** Ended batches, `perDay` a day over seven days ending two days ago, each with six readings from 150 °F to 38 °F in three hours. */
async function endedWeek(t: Tenant, perDay: number, now: number) {
  const rows = [];
  for (let d = 2; d <= 8; d++)
    for (let k = 0; k < perDay; k++) {
      const startedAt = new Date(now - d * DAY - k * 10 * MIN);
      rows.push({ ...batchRow(t, `W-${d}-${k}`, startedAt), method: "walk-in", fillDepthMm: 50, state: "cooled" as const, endedAt: new Date(startedAt.getTime() + 180 * MIN), verdict: "ahead" as const, assessedAt: new Date(startedAt.getTime() + 180 * MIN) });
    }
  const made = await db.insert(batches).values(rows).returning({ id: batches.id, startedAt: batches.startedAt });
  const curve: [number, number][] = [[0, 150], [30, 120], [60, 95], [90, 75], [120, 60], [180, 38]];
  const rs = made.flatMap((b) => curve.map(([m, f]) => readingRow(t, b.id, f, new Date(b.startedAt.getTime() + m * MIN))));
  for (let i = 0; i < rs.length; i += 2000) await db.insert(readings).values(rs.slice(i, i + 2000));
  // The local dates that hold every one of them, and none of the batches cooling today.
  const range = { from: localDateOf(now - 9 * DAY, t.site.timeZone), to: localDateOf(now - 2 * DAY, t.site.timeZone) };
  return { batches: made.length, readings: rs.length, range };
}

export async function seedKitchen(options: { cooling: number; perDay: number }) {
  const now = Date.now();
  const tag = randomUUID().slice(0, 8);
  const t = await createTenant(db, `bench-${tag}`);
  // Its weekly records e-mail goes out on Sundays at 23:00: otherwise the week seeded below would be
  // mailed (a workbook with curves, seconds of the app's time) in the middle of a measured phase. The
  // export phase measures that workbook on its own.
  await db.update(sites).set({ weeklyRecordsWeekday: 7, weeklyRecordsHour: 23 }).where(eq(sites.id, t.site.id));
  const cooling = await coolingBatches(t, options.cooling, now);
  const week = await endedWeek(t, options.perDay, now);
  const manager = { id: t.people.manager.id } as SessionUser;
  const apiToken = await createApiToken(manager, t.site, "Bench tablets");
  // A station device as the station set-up page makes one: the cookie holds the token, the row its hash.
  const stationToken = makeToken();
  await db.insert(stationDevices).values({ siteId: t.site.id, name: "Bench station", tokenHash: hashToken(stationToken), createdBy: t.people.manager.id });
  // The bare INSERTs go to another kitchen's ended batches, so they change nothing the app serves.
  const other = await createTenant(db, `bare-${tag}`);
  const bare = await db
    .insert(batches)
    .values(Array.from({ length: options.cooling }, (_, i) => ({ ...batchRow(other, `X-${i}`, new Date(now - DAY)), state: "cooled" as const, endedAt: new Date(now - DAY + 180 * MIN) })))
    .returning({ id: batches.id });
  return { tenant: t, cooling, week, apiToken, stationToken, bare: { tenant: other, batchIds: bare.map((b) => b.id) } };
}
export type Kitchen = Awaited<ReturnType<typeof seedKitchen>>;
