import { randomUUID } from "node:crypto";
import sharp from "sharp";
import { readings } from "~db/schema";
import { localDateOf } from "~/lib/records-export";
import { endedBatch, minutesAgo } from "./batches";
import { Client, signedIn } from "./client";
import { db, newTenant } from "./db";

type Tenant = Awaited<ReturnType<typeof newTenant>>;
const ZONE = "America/Denver";
const DAY = 86_400_000;

/** A probe photo uploaded by the cook through the API, as the tablet does: its id. */
export async function uploadPhoto(cook: Client, colour = "#2e86c1") {
  const png = await sharp({ create: { width: 64, height: 48, channels: 3, background: colour } }).png().toBuffer();
  const res = await cook.request("/api/v1/photos", { body: png, headers: { "content-type": "application/octet-stream" } });
  if (res.status !== 201) throw new Error(`photo upload answered ${res.status}`);
  return ((await res.json()) as { id: string }).id;
}

/**
 * A kitchen with something to share: a batch of today cooled through both stages from real readings
 * (one carrying a photo), a batch of ten days ago (outside a two-day range) whose reading carries
 * another photo, and the range of the last two days in site time.
 */
export async function sharedKitchen() {
  const t = await newTenant();
  const cook = await signedIn(t.people.cook.email, t.people.cook.password);
  const photoId = await uploadPhoto(cook);
  const lot = `IN-${randomUUID().slice(0, 4)}`;
  const startedAt = minutesAgo(200);
  const start = await cook.request("/api/v1/batches", {
    json: { clientId: randomUUID(), productId: t.product.id, lotCode: lot, pan: { size: "gn-1/1", depthMm: 65, count: 1, fillDepthMm: 50 }, method: "walk-in", start: { value: 150, unit: "F", takenAt: startedAt.toISOString() } },
  });
  if (start.status !== 201) throw new Error(`batch start answered ${start.status}`);
  const batch = ((await start.json()) as { batch: { id: string } }).batch;
  for (const [m, value, photo] of [
    [150, 120, photoId],
    [100, 68, undefined],
    [60, 40, undefined],
  ] as const) {
    const res = await cook.request(`/api/v1/batches/${batch.id}/readings`, { json: { clientId: randomUUID(), value, unit: "F", takenAt: minutesAgo(m).toISOString(), ...(photo ? { photoId: photo } : {}) } });
    if (res.status !== 201) throw new Error(`reading answered ${res.status}`);
  }
  const oldLot = `OLD-${randomUUID().slice(0, 4)}`;
  const old = await endedBatch(t, { state: "cooled", lotCode: oldLot, startedAt: new Date(Date.now() - 10 * DAY), endedAt: new Date(Date.now() - 10 * DAY + 4 * 3600_000) });
  const oldPhotoId = await uploadPhoto(cook, "#c0392b");
  await db.insert(readings).values({ batchId: old.id, siteId: t.site.id, clientId: randomUUID(), valueEntered: 40, unitEntered: "F", valueC: 4.4, takenAt: new Date(Date.now() - 10 * DAY + 3600_000), late: false, source: "api", photoId: oldPhotoId });
  const now = Date.now();
  const range = { from: localDateOf(now - DAY, ZONE), to: localDateOf(now, ZONE) };
  return { t, cook, batch: { id: batch.id, lot, photoId, startedAt: startedAt.getTime() }, old: { id: old.id, lot: oldLot, photoId: oldPhotoId }, range };
}

/** Makes a share link through the sharing screen, as QA does; the full link is read from the answer. */
export async function makeShareLink(t: Tenant, by: Client, form: Record<string, string>) {
  const res = await by.post(`/sites/${t.site.id}/sharing`, { intent: "create", expiry: "days", expiresInDays: "7", ...form });
  const html = await res.text();
  const token = /\/shared\/([A-Za-z0-9_-]{43})/.exec(html)?.[1] ?? null;
  return { status: res.status, html, token };
}
