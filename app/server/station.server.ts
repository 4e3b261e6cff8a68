import { and, eq, inArray, isNull, lt, sql } from "drizzle-orm";
import { createHmac } from "node:crypto";
import { memberships, sites, stationDevices, users } from "~db/schema";
import { recordAudit } from "./audit.server";
import { hashToken, sameHash, verifySecret } from "./crypto.server";
import { db } from "./db.server";
import { env } from "./env.server";
import { consume, pinFailuresByDevice } from "./rate-limit.server";

const secure = env.APP_URL.startsWith("https:") ? "; Secure" : "";
export const STATION_COOKIE = "cw_station";
export const STATION_COOK_COOKIE = "cw_station_cook";
/** A PIN locks after this many wrong entries in a row; a manager resets it. */
export const PIN_LOCK_AFTER = 5;
/** How long a cook stays "on" a station after their PIN, without another entry. */
const COOK_MINUTES = 5;

export function readCookie(request: Request, name: string) {
  const header = request.headers.get("cookie") ?? "";
  for (const part of header.split(/;\s*/)) {
    const i = part.indexOf("=");
    if (i > 0 && part.slice(0, i) === name) return decodeURIComponent(part.slice(i + 1));
  }
  return null;
}

export const stationCookie = (token: string) =>
  `${STATION_COOKIE}=${token}; Path=/; HttpOnly; SameSite=Lax; Max-Age=${180 * 24 * 3600}${secure}`;
export const clearStationCookies = () => [
  `${STATION_COOKIE}=; Path=/; HttpOnly; SameSite=Lax; Max-Age=0${secure}`,
  `${STATION_COOK_COOKIE}=; Path=/; HttpOnly; SameSite=Lax; Max-Age=0${secure}`,
];

export type StationDevice = {
  id: string;
  name: string;
  siteId: string;
  siteName: string;
  organisationId: string;
  temperatureUnit: "F" | "C";
  timeZone: string;
};

// Asked by every station page and entry: built once, prepared once per connection.
const deviceStatement = db
  .select({
    id: stationDevices.id,
    name: stationDevices.name,
    siteId: stationDevices.siteId,
    siteName: sites.name,
    organisationId: sites.organisationId,
    temperatureUnit: sites.temperatureUnit,
    timeZone: sites.timeZone,
  })
  .from(stationDevices)
  .innerJoin(sites, eq(sites.id, stationDevices.siteId))
  .where(and(eq(stationDevices.tokenHash, sql.placeholder("hash")), isNull(stationDevices.revokedAt)))
  .prepare("cw_station_device");
const peopleStatement = db
  .select({ id: users.id, name: users.name, role: memberships.role, locked: sql<boolean>`${users.pinLockedAt} is not null`, hasPin: sql<boolean>`${users.pinHash} is not null` })
  .from(memberships)
  .innerJoin(users, eq(users.id, memberships.userId))
  // QA reads the records but does not make entries.
  .where(and(eq(memberships.siteId, sql.placeholder("siteId")), eq(users.active, true), inArray(memberships.role, ["cook", "manager", "admin"])))
  .orderBy(users.name)
  .prepare("cw_station_people");

/** The station device this browser was set up as, unless it was revoked. */
export async function getStationDevice(request: Request): Promise<StationDevice | null> {
  const token = readCookie(request, STATION_COOKIE);
  if (!token) return null;
  const [device] = await deviceStatement.execute({ hash: hashToken(token) });
  return device ?? null;
}

/** The people who may make entries on this station: active members of its site. */
export function listStationPeople(siteId: string) {
  return peopleStatement.execute({ siteId });
}

export type PinResult = { ok: true; userId: string; name: string } | { ok: false; reason: "wrong" | "locked" | "device_limited" | "unknown"; attemptsLeft?: number };

/**
 * Checks a cook's PIN on a station device. The attempt is counted before the (slow) hash check, in
 * one conditional UPDATE, so parallel guesses cannot get past the limit; a right PIN gives it back.
 */
export async function verifyStationPin(device: StationDevice, userId: string, pin: string): Promise<PinResult> {
  if (!(await consume(pinFailuresByDevice, device.id))) return { ok: false, reason: "device_limited" };
  const [person] = await db
    .select({ id: users.id, name: users.name, pinHash: users.pinHash })
    .from(users)
    .innerJoin(memberships, and(eq(memberships.userId, users.id), eq(memberships.siteId, device.siteId), inArray(memberships.role, ["cook", "manager", "admin"])))
    .where(and(eq(users.id, userId), eq(users.active, true)));
  if (!person) return { ok: false, reason: "unknown" };
  const [reserved] = await db
    .update(users)
    .set({ pinFailedAttempts: sql`${users.pinFailedAttempts} + 1` })
    .where(and(eq(users.id, person.id), isNull(users.pinLockedAt), lt(users.pinFailedAttempts, PIN_LOCK_AFTER)))
    .returning({ attempts: users.pinFailedAttempts });
  if (!reserved) return { ok: false, reason: "locked" };
  const actor = { kind: "station" as const, userId: person.id, deviceId: device.id };
  if (await verifySecret(person.pinHash, pin)) {
    await db.transaction(async (tx) => {
      await tx.update(users).set({ pinFailedAttempts: 0 }).where(eq(users.id, person.id));
      await tx.update(stationDevices).set({ lastSeenAt: new Date() }).where(eq(stationDevices.id, device.id));
      await recordAudit(tx, { actor, organisationId: device.organisationId, siteId: device.siteId, action: "station.pin_accepted", entity: "user", entityId: person.id });
    });
    await pinFailuresByDevice.reward(device.id, 1);
    return { ok: true, userId: person.id, name: person.name };
  }
  const locked = await db.transaction(async (tx) => {
    const [after] = await tx
      .update(users)
      .set({ pinLockedAt: sql`case when ${users.pinFailedAttempts} >= ${PIN_LOCK_AFTER} then now() else ${users.pinLockedAt} end` })
      .where(eq(users.id, person.id))
      .returning({ failed: users.pinFailedAttempts, lockedAt: users.pinLockedAt });
    await recordAudit(tx, {
      actor,
      organisationId: device.organisationId,
      siteId: device.siteId,
      action: after.lockedAt ? "user.pin_locked" : "user.pin_failed",
      entity: "user",
      entityId: person.id,
      data: { failedAttempts: after.failed },
    });
    return after;
  });
  if (locked.lockedAt) return { ok: false, reason: "locked" };
  return { ok: false, reason: "wrong", attemptsLeft: PIN_LOCK_AFTER - locked.failed };
}

// The cook now at the station: a signed, short-lived cookie naming device, user and expiry.
const sign = (value: string) => createHmac("sha256", env.AUTH_SECRET).update(value).digest("base64url");

export function stationCookCookie(deviceId: string, userId: string) {
  const expires = Date.now() + COOK_MINUTES * 60_000;
  const value = `${deviceId}.${userId}.${expires}`;
  return `${STATION_COOK_COOKIE}=${value}.${sign(value)}; Path=/; HttpOnly; SameSite=Lax; Max-Age=${COOK_MINUTES * 60}${secure}`;
}

export function getStationCookId(request: Request, device: StationDevice) {
  const raw = readCookie(request, STATION_COOK_COOKIE);
  return raw ? readAttribution(raw, device, Date.now()) : null;
}

/** The station-cook value, read as of a moment: its user id when signed for this device and valid then. */
export function readAttribution(raw: string, device: StationDevice, at: number) {
  const parts = raw.split(".");
  if (parts.length !== 4) return null;
  const [deviceId, userId, expires, mac] = parts;
  if (!sameHash(mac, sign(`${deviceId}.${userId}.${expires}`))) return null;
  // Entries up to a day old may arrive after a network outage; each must be taken within the PIN's window.
  const until = Number(expires);
  if (!Number.isFinite(at) || !Number.isFinite(until) || deviceId !== device.id) return null;
  // Valid for entries taken while the PIN was on (from its entry to its expiry, a minute's clock skew
  // either side), sent within a day.
  if (at > until + 60_000 || at < until - COOK_MINUTES * 60_000 - 60_000 || at < Date.now() - 24 * 3600_000) return null;
  return userId;
}

/** The raw station-cook value, for the page to keep with entries it saves while offline. */
export const stationAttribution = (request: Request) => readCookie(request, STATION_COOK_COOKIE);
