import { RateLimiterPostgres, RateLimiterRes } from "rate-limiter-flexible";
import { pool } from "./db.server";
import { env } from "./env.server";

// Counters live in PostgreSQL (table rate_limits, made by the migrations) so limits hold across
// every app process.
const make = (keyPrefix: string, points: number, durationSeconds: number) =>
  new RateLimiterPostgres({
    storeClient: pool,
    storeType: "pool",
    tableName: "rate_limits",
    tableCreated: true,
    clearExpiredByTimeout: false,
    keyPrefix,
    points,
    duration: durationSeconds,
  });

/** Failed sign-ins: 5 per account and 30 per address within 15 minutes. */
export const signInFailuresByAccount = make("signin-account", 5, 15 * 60);
export const signInFailuresByAddress = make("signin-address", 30, 15 * 60);
/** Failed PIN entries per station device: 20 within 15 minutes. */
export const pinFailuresByDevice = make("pin-device", 20, 15 * 60);
/** Password-reset e-mails: 3 per account and 20 per address within an hour. */
export const resetRequestsByAccount = make("reset-account", 3, 60 * 60);
export const resetRequestsByAddress = make("reset-address", 20, 60 * 60);

/** True when the key has used up its points. Reading does not consume. */
export async function isLimited(limiter: RateLimiterPostgres, key: string) {
  const res = await limiter.get(key);
  return res !== null && res.consumedPoints >= limiter.points;
}

/** Counts one event; returns false when that event was over the limit. */
export async function consume(limiter: RateLimiterPostgres, key: string) {
  try {
    await limiter.consume(key);
    return true;
  } catch (e) {
    if (e instanceof RateLimiterRes) return false;
    throw e;
  }
}

/**
 * The address a request came from, or null when it cannot be known. Behind a reverse proxy
 * (TRUST_PROXY=true) that is the last X-Forwarded-For entry — the one the proxy itself added; the
 * entries before it are whatever the client sent. Served directly, react-router-serve does not expose
 * the socket address: then there is no per-address limit (one shared bucket would let a stranger lock
 * everyone out), and the per-account limits still hold.
 */
export function clientAddress(request: Request): string | null {
  if (!env.TRUST_PROXY) return null;
  const hops = request.headers.get("x-forwarded-for")?.split(",").map((h) => h.trim()).filter(Boolean);
  return hops?.length ? hops[hops.length - 1] : null;
}

/** Counts one attempt against each key that is known; false when any of them is over its limit. */
export async function consumeAll(pairs: [RateLimiterPostgres, string | null][]) {
  let ok = true;
  for (const [limiter, key] of pairs) if (key !== null && !(await consume(limiter, key))) ok = false;
  return ok;
}
