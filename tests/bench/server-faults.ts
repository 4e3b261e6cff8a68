// Faults under load: simulated tablets, each with its own queue of readings sent in order with a fixed
// client id and retried with back-off on a network error, a 5xx, 408 or 429 (as app/lib/outbox.ts does
// in the browser), while PostgreSQL restarts, or while the app is killed and started again. Afterwards
// every entry acknowledged with a 2xx, and every entry of every queue, is in the database exactly once.
import { sql } from "drizzle-orm";
import { APP_URL, restartPostgres, sleep, waitForHealth, type AppProcess } from "./server-app";
import { db, type Kitchen } from "./server-scenario";

export type FaultOptions = { tablets: number; periodMs: number; seconds: number; faultAtS: number };
type Entry = { batchId: string; clientId: string; value: number; takenAt: string };
type Attempt = { sentAt: number; doneAt: number; ok: boolean };

export type FaultReport = {
  fault: string;
  entries: number;
  sent: number;
  acked: number;
  retried: number;
  errors: Record<string, number>;
  rejected: number;
  gaveUp: number;
  stored: number;
  duplicates: number;
  ackedMissing: number;
  queueMissing: number;
  faultMs: number;
  recoveryMs: number | null;
  disruptedMs: number | null;
  after: string;
};

const retryable = (status: number) => status >= 500 || status === 408 || status === 429;

async function runTablets(k: Kitchen, prefix: string, o: FaultOptions, fault: () => Promise<{ start: number; end: number }>) {
  const start = Date.now();
  const stopMaking = start + o.seconds * 1000;
  const hardDeadline = stopMaking + 60_000;
  const queues: Entry[][] = Array.from({ length: o.tablets }, () => []);
  const attempts: Attempt[] = [];
  const acked = new Set<string>();
  const errors: Record<string, number> = {};
  let sent = 0;
  let retried = 0;
  let rejected = 0;
  let gaveUp = 0;
  const ids = k.cooling.ids;
  const values = new Map<string, number>();

  // Each tablet takes a reading every period (its cook's entries), whatever the network does.
  const making = queues.map(async (queue, t) => {
    let n = 0;
    await sleep((t * o.periodMs) / o.tablets);
    while (Date.now() < stopMaking) {
      const batchId = ids[(t + n * o.tablets) % ids.length];
      const v = Math.max(80, (values.get(batchId) ?? 110) - 0.1);
      values.set(batchId, v);
      queue.push({ batchId, clientId: `${prefix}-${t}-${n++}`, value: Math.round(v * 10) / 10, takenAt: new Date().toISOString() });
      await sleep(o.periodMs);
    }
  });
  let making_done = false;
  const made = Promise.all(making).then(() => (making_done = true));

  // Each tablet sends its queue oldest first; an entry leaves the queue only when the server has it.
  const sending = queues.map(async (queue) => {
    let i = 0;
    while (!making_done || i < queue.length) {
      if (i >= queue.length) {
        await sleep(20);
        continue;
      }
      const e = queue[i];
      let delay = 100;
      for (let attempt = 0; ; attempt++) {
        if (Date.now() > hardDeadline) {
          gaveUp++;
          break;
        }
        sent++;
        if (attempt > 0) retried++;
        const sentAt = Date.now();
        let failure: string;
        try {
          const res = await fetch(`${APP_URL}/api/v1/batches/${e.batchId}/readings`, {
            method: "POST",
            headers: { authorization: `Bearer ${k.apiToken}`, "content-type": "application/json" },
            body: JSON.stringify({ clientId: e.clientId, value: e.value, unit: "F", takenAt: e.takenAt }),
            signal: AbortSignal.timeout(10_000),
          });
          await res.arrayBuffer();
          attempts.push({ sentAt, doneAt: Date.now(), ok: res.ok });
          if (res.ok) {
            acked.add(e.clientId);
            break;
          }
          failure = String(res.status);
          if (!retryable(res.status)) {
            rejected++;
            errors[failure] = (errors[failure] ?? 0) + 1;
            break;
          }
        } catch (err) {
          attempts.push({ sentAt, doneAt: Date.now(), ok: false });
          const cause = (err as { cause?: { code?: string } }).cause;
          failure = cause?.code ?? (err as Error).name;
        }
        errors[failure] = (errors[failure] ?? 0) + 1;
        await sleep(delay * (0.5 + Math.random()));
        delay = Math.min(delay * 2, 2000);
      }
      i++;
    }
  });

  await sleep(o.faultAtS * 1000);
  const window = await fault();
  await made;
  await Promise.all(sending);
  const entries = queues.flat();
  // Recovery: from the end of the fault to the first 2xx of a request sent after it.
  const firstOk = attempts.filter((a) => a.ok && a.sentAt >= window.end).reduce((m, a) => Math.min(m, a.doneAt), Infinity);
  const failed = attempts.filter((a) => !a.ok && a.doneAt >= window.start);
  const disruptedMs = failed.length ? Math.max(...failed.map((a) => a.doneAt)) - window.start : null;
  return { entries, acked, sent, retried, errors, rejected, gaveUp, window, recoveryMs: Number.isFinite(firstOk) ? firstOk - window.end : null, disruptedMs };
}

async function storedOnce(prefix: string, entries: Entry[], acked: Set<string>) {
  const { rows } = await db.execute<{ client_id: string; n: number }>(sql`SELECT client_id, count(*)::int AS n FROM readings WHERE client_id LIKE ${prefix + "-%"} GROUP BY client_id`);
  const counts = new Map(rows.map((r) => [r.client_id, r.n]));
  return {
    stored: counts.size,
    duplicates: rows.reduce((s, r) => s + r.n - 1, 0),
    ackedMissing: [...acked].filter((c) => !counts.has(c)).length,
    queueMissing: entries.filter((e) => !counts.has(e.clientId)).length,
  };
}

/** One POST with a new client id: the app takes readings again. */
async function answersAgain(k: Kitchen, clientId: string) {
  const health = await fetch(`${APP_URL}/healthz`);
  const res = await fetch(`${APP_URL}/api/v1/batches/${k.cooling.ids[0]}/readings`, {
    method: "POST",
    headers: { authorization: `Bearer ${k.apiToken}`, "content-type": "application/json" },
    body: JSON.stringify({ clientId, value: 90, unit: "F" }),
  });
  return `healthz ${health.status}, POST ${res.status}`;
}

export async function runFaults(app: AppProcess, k: Kitchen, o: FaultOptions): Promise<FaultReport[]> {
  const reports: FaultReport[] = [];

  // (a) PostgreSQL restarts under the app, which must carry on without a restart of its own.
  {
    const pid = app.pid;
    const exitsBefore = app.exits.length;
    const run = await runTablets(k, "fault-pg", o, async () => {
      const start = Date.now();
      await restartPostgres();
      return { start, end: Date.now() };
    });
    const same = app.pid === pid && app.exits.length === exitsBefore;
    const after = same ? `same app process (pid ${pid}); ${await answersAgain(k, "after-fault-pg")}` : `the app process exited (${JSON.stringify(app.exits.slice(exitsBefore))})`;
    const check = await storedOnce("fault-pg", run.entries, run.acked);
    reports.push({ fault: "PostgreSQL restart (pg_ctl -m fast)", entries: run.entries.length, sent: run.sent, acked: run.acked.size, retried: run.retried, errors: run.errors, rejected: run.rejected, gaveUp: run.gaveUp, ...check, faultMs: run.window.end - run.window.start, recoveryMs: run.recoveryMs, disruptedMs: run.disruptedMs, after });
    if (!same) await app.start();
  }

  // (b) The app is killed (SIGKILL) mid-load and started again.
  {
    const run = await runTablets(k, "fault-kill", o, async () => {
      const start = Date.now();
      await app.kill("SIGKILL");
      await app.start();
      return { start, end: Date.now() };
    });
    await waitForHealth(10_000);
    const after = `restarted app (pid ${app.pid}); ${await answersAgain(k, "after-fault-kill")}`;
    const check = await storedOnce("fault-kill", run.entries, run.acked);
    reports.push({ fault: "app killed (SIGKILL), started again", entries: run.entries.length, sent: run.sent, acked: run.acked.size, retried: run.retried, errors: run.errors, rejected: run.rejected, gaveUp: run.gaveUp, ...check, faultMs: run.window.end - run.window.start, recoveryMs: run.recoveryMs, disruptedMs: run.disruptedMs, after });
  }
  return reports;
}

export function printFaults(reports: FaultReport[]) {
  for (const r of reports) {
    const errors = Object.entries(r.errors).map(([k, v]) => `${k} ×${v}`).join(", ") || "none";
    console.log(`\n${r.fault}`);
    console.log(`  queued ${r.entries} entries; ${r.sent} requests sent, ${r.retried} of them retries; ${r.acked} entries acknowledged (2xx), ${r.rejected} rejected, ${r.gaveUp} given up`);
    console.log(`  failures seen: ${errors}`);
    console.log(`  stored ${r.stored}, duplicates ${r.duplicates}, acknowledged but missing ${r.ackedMissing}, queued but missing ${r.queueMissing}`);
    console.log(`  fault lasted ${r.faultMs} ms; first 2xx ${r.recoveryMs ?? "—"} ms after it; failures until ${r.disruptedMs ?? "—"} ms after it began`);
    console.log(`  afterwards: ${r.after}`);
  }
}

export const faultsHeld = (r: FaultReport) => r.duplicates === 0 && r.ackedMissing === 0 && r.queueMissing === 0 && r.rejected === 0 && r.gaveUp === 0 && r.stored === r.entries;
