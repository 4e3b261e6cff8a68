import { eq } from "drizzle-orm";
import { data, redirect } from "react-router";
import { sites } from "~db/schema";
import type { Assessment } from "~/lib/engine/assess";
import type { Entrant } from "./batches.server";
import { db } from "./db.server";
import { getStationCookId, getStationDevice, listStationPeople, readAttribution } from "./station.server";

/** The station device, its site, and the cook whose PIN is active; anything less goes back to the station home. */
export async function requireStationCook(request: Request) {
  const device = await getStationDevice(request);
  if (!device) throw redirect("/station");
  const cookId = getStationCookId(request, device);
  const people = cookId ? await listStationPeople(device.siteId) : [];
  const cook = people.find((p) => p.id === cookId);
  if (!cook) {
    const url = new URL(request.url);
    throw redirect(`/station?next=${encodeURIComponent(url.pathname)}`);
  }
  const [site] = await db.select().from(sites).where(eq(sites.id, device.siteId));
  const entrant: Entrant = { actor: { kind: "station", userId: cook.id, deviceId: device.id }, userId: cook.id, source: "station", stationDeviceId: device.id };
  return { device, site, cook, entrant };
}

export type CardData = {
  id: string;
  product: string;
  lotCode: string;
  startedAt: number;
  lastReading: { value: number; unit: "F" | "C"; takenAt: number; late: boolean } | null;
  nextStage: { stage: number; limit: { value: number; unit: "F" | "C" }; deadline: number | null; status: string } | null;
  verdict: "ahead" | "tight" | "behind";
  nextDueAt: number | null;
  outcome: string;
  nextStep: string | null;
};

/** What a batch card shows, from a batch, its readings and its assessment. */
export function cardFor(
  batch: { id: string; lotCode: string; startedAt: Date },
  productName: string,
  rows: { valueEntered: number; unitEntered: "F" | "C"; takenAt: Date; late: boolean }[],
  a: Assessment,
  intervalMinutes: number,
): CardData {
  const last = rows.at(-1);
  const open = a.evaluation.stages.find((s) => s.status !== "met");
  return {
    id: batch.id,
    product: productName,
    lotCode: batch.lotCode,
    startedAt: batch.startedAt.getTime(),
    lastReading: last ? { value: last.valueEntered, unit: last.unitEntered, takenAt: last.takenAt.getTime(), late: last.late } : null,
    nextStage: open ? { stage: open.stage, limit: open.limit, deadline: open.deadline, status: open.status } : null,
    verdict: a.prediction.verdict,
    nextDueAt: last ? last.takenAt.getTime() + intervalMinutes * 60_000 : null,
    outcome: a.evaluation.outcome,
    nextStep: a.evaluation.nextStep,
  };
}

/**
 * An entry saved on the tablet while the network was down carries the cook's attribution as it was
 * when the entry was made (the signed station-cook value): it is accepted later if its signature is
 * good, it names this device, and the entry was taken while it was valid. Sent within a day.
 */
export async function requireStationEntrant(request: Request, attribution: unknown, takenAt: number) {
  const device = await getStationDevice(request);
  if (!device) throw data({ error: "This device is not a station" }, { status: 401 });
  const cookId = typeof attribution === "string" ? readAttribution(attribution, device, takenAt) : null;
  if (!cookId) throw data({ errors: { attribution: "The PIN for this entry has expired: enter your PIN again" } }, { status: 401 });
  const people = await listStationPeople(device.siteId);
  if (!people.some((p) => p.id === cookId)) throw data({ errors: { attribution: "That person cannot make entries here" } }, { status: 403 });
  const [site] = await db.select().from(sites).where(eq(sites.id, device.siteId));
  const entrant: Entrant = { actor: { kind: "station", userId: cookId, deviceId: device.id }, userId: cookId, source: "station", stationDeviceId: device.id };
  return { device, site, entrant };
}
