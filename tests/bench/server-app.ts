// What the server bench starts and measures with: the built app as a child process it can kill and
// start again, PostgreSQL's restart through pg_ctl, and the figures (percentiles, the table).
import { spawn, spawnSync, type ChildProcess } from "node:child_process";
import { openSync } from "node:fs";
import { resolve } from "node:path";

const ROOT = resolve(import.meta.dirname, "../..");
export const APP_PORT = Number(process.env.APP_PORT ?? 3201);
export const APP_URL = `http://127.0.0.1:${APP_PORT}`;
export const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

/** The built app (scripts/serve.mjs, one process per core unless WEB_CONCURRENCY), as test.sh starts it, with the alert timings left at their defaults. */
export class AppProcess {
  child: ChildProcess | null = null;
  exits: { at: number; code: number | null; signal: string | null }[] = [];
  readonly log = resolve(ROOT, ".data/bench-app.log");

  async start() {
    const env: Record<string, string | undefined> = { ...process.env, DATABASE_URL: process.env.APP_DATABASE_URL ?? process.env.DATABASE_URL, HOST: "127.0.0.1", PORT: String(APP_PORT), NODE_ENV: "production", TRUST_PROXY: "1", APP_URL };
    for (const k of Object.keys(env)) if (k.startsWith("ALERT_")) delete env[k];
    // e.g. BENCH_APP_NODE_ARGS="--cpu-prof --cpu-prof-dir=.data/prof" to profile the app under load.
    const nodeArgs = process.env.BENCH_APP_NODE_ARGS?.split(" ").filter(Boolean) ?? [];
    const out = openSync(this.log, "a");
    const child = spawn(process.execPath, [...nodeArgs, "scripts/serve.mjs", "./build/server/index.js"], { cwd: ROOT, env, stdio: ["ignore", out, out] });
    this.child = child;
    child.on("exit", (code, signal) => {
      this.exits.push({ at: Date.now(), code, signal });
      if (this.child === child) this.child = null;
    });
    const started = Date.now();
    await waitForHealth(30_000);
    return Date.now() - started;
  }

  get pid() {
    return this.child?.pid ?? null;
  }

  kill(signal: NodeJS.Signals = "SIGKILL") {
    const child = this.child;
    if (!child) return Promise.resolve();
    return new Promise<void>((done) => {
      child.once("exit", () => done());
      child.kill(signal);
    });
  }

  async stop() {
    const child = this.child;
    if (!child) return;
    const exited = new Promise<void>((done) => child.once("exit", () => done()));
    child.kill("SIGTERM");
    const t = setTimeout(() => child.kill("SIGKILL"), 8000);
    await exited;
    clearTimeout(t);
  }
}

export async function waitForHealth(timeoutMs: number) {
  const end = Date.now() + timeoutMs;
  while (Date.now() < end) {
    try {
      if ((await fetch(`${APP_URL}/healthz`, { signal: AbortSignal.timeout(2000) })).ok) return;
    } catch {}
    await sleep(50);
  }
  throw new Error(`the app did not answer ${APP_URL}/healthz within ${timeoutMs / 1000} s (see .data/bench-app.log)`);
}

/** `pg_ctl restart -m fast` of the project's cluster, as the postgres user when run as root (as lib.sh's as_pg). */
export function restartPostgres() {
  const { PG_BIN, PG_DATA, PG_LOG } = process.env;
  if (!PG_BIN || !PG_DATA || !PG_LOG) throw new Error("PG_BIN, PG_DATA and PG_LOG must be set (scripts/bench-server.sh sets them)");
  const args = [`${PG_BIN}/pg_ctl`, "-D", PG_DATA, "-l", PG_LOG, "-m", "fast", "-w", "-s", "restart"];
  const asRoot = process.getuid?.() === 0;
  const started = Date.now();
  return new Promise<number>((done, fail) => {
    const p = asRoot ? spawn("runuser", ["-u", "postgres", "--", ...args], { stdio: "inherit" }) : spawn(args[0], args.slice(1), { stdio: "inherit" });
    p.on("exit", (code) => (code === 0 ? done(Date.now() - started) : fail(new Error(`pg_ctl restart exited with ${code}`))));
  });
}

export const uptime = () => spawnSync("uptime", { encoding: "utf8" }).stdout.trim();

/** Nearest-rank percentile of latencies in ms. */
export function percentile(sorted: number[], p: number) {
  if (sorted.length === 0) return NaN;
  return sorted[Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1))];
}

export type Figure = { what: string; requests: number; seconds: number; latencies: number[]; notes?: string };

export function printTable(rows: Figure[]) {
  const head = ["what", "requests", "req/s", "p50 ms", "p95 ms", "p99 ms", "notes"];
  const body = rows.map((r) => {
    const s = [...r.latencies].sort((a, b) => a - b);
    return [r.what, String(r.requests), (r.requests / r.seconds).toFixed(1), percentile(s, 50).toFixed(1), percentile(s, 95).toFixed(1), percentile(s, 99).toFixed(1), r.notes ?? ""];
  });
  const widths = head.map((h, i) => Math.max(h.length, ...body.map((b) => b[i].length)));
  const line = (cells: string[]) => "| " + cells.map((c, i) => (i === 0 || i === cells.length - 1 ? c.padEnd(widths[i]) : c.padStart(widths[i]))).join(" | ") + " |";
  console.log(line(head));
  console.log("|" + widths.map((w, i) => (i === 0 || i === widths.length - 1 ? "-".repeat(w + 2) : "-".repeat(w + 1) + ":")).join("|") + "|");
  for (const b of body) console.log(line(b));
}
