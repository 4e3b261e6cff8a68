// npm run bench:server (load) and npm run bench:faults: the built app on loopback, started and stopped
// here. Run through scripts/bench-server.sh, which prepares PostgreSQL, the build and maildev and sets
// the environment. Figures, not pass/fail: it exits non-zero only when a reading was lost or doubled.
//   BENCH_SECONDS (20)  BENCH_CONNECTIONS (50)  BENCH_LIVE_CONNECTIONS (10)  BENCH_EXPORTS (10)  BENCH_PACE_SECONDS (5)
//   BENCH_TABLETS (50)  BENCH_FAULT_SECONDS (20)
//   BENCH_PHASES: a comma-separated subset of idle, live-alone, poll-alone, paced, spread, mixed, posts-alone,
//   export, bare (default: all), e.g. to profile one of them with BENCH_APP_NODE_ARGS.
import { gzipSync } from "node:zlib";
import autocannon, { type Instance } from "autocannon";
import { cpus } from "node:os";
import pg from "pg";
import { AppProcess, APP_URL, percentile, printTable, uptime, type Figure } from "./server-app";

const mode = process.argv[2] ?? "load";
for (const name of ["DATABASE_URL", "AUTH_SECRET", "APP_URL", "SMTP_PORT"])
  if (!process.env[name]) throw new Error(`${name} is not set: run this through npm run bench:server (scripts/bench-server.sh)`);
const SECONDS = Number(process.env.BENCH_SECONDS ?? 20);
const CONNECTIONS = Number(process.env.BENCH_CONNECTIONS ?? 50);
const LIVE_CONNECTIONS = Number(process.env.BENCH_LIVE_CONNECTIONS ?? 10);
const EXPORTS = Number(process.env.BENCH_EXPORTS ?? 10);
const PACE = Number(process.env.BENCH_PACE_SECONDS ?? 5);
const COOLING = 200;
const PER_DAY = 40;
// The bare INSERTs get the app's own pool size, so the comparison is of the work, not of connections.
const POOL_MAX = Number(process.env.DB_POOL_MAX ?? 10);
const PHASES = process.env.BENCH_PHASES?.split(",").map((p) => p.trim()).filter(Boolean);
const want = (phase: string) => !PHASES || PHASES.includes(phase);

const app = new AppProcess();
let stopping = false;
async function shutdown(code: number) {
  if (stopping) return;
  stopping = true;
  await app.stop().catch(() => {});
  process.exit(code);
}
process.on("SIGINT", () => void shutdown(130));
process.on("SIGTERM", () => void shutdown(143));

const { seedKitchen, pool } = await import("./server-scenario");
const { signedIn } = await import("../helpers/client");
const { faultsHeld, printFaults, runFaults } = await import("./server-faults");

type Measured = { latencies: number[]; statuses: Map<number, number>; errors: number; seconds: number };
const none = (seconds = 1): Measured => ({ latencies: [], statuses: new Map(), errors: 0, seconds });
/** One answer's latency and status, into a series measured by hand (not by autocannon). */
const count = (m: Measured, status: number, ms: number) => {
  m.latencies.push(ms);
  m.statuses.set(status, (m.statuses.get(status) ?? 0) + 1);
};

/** Runs an autocannon instance to its end, keeping every response's latency (autocannon reports no p95). */
async function measure(inst: Instance): Promise<Measured> {
  const latencies: number[] = [];
  const statuses = new Map<number, number>();
  let errors = 0;
  inst.on("response", (_client: unknown, status: number, _bytes: number, ms: number) => {
    latencies.push(ms);
    statuses.set(status, (statuses.get(status) ?? 0) + 1);
  });
  inst.on("reqError", () => errors++);
  const result = await inst;
  return { latencies, statuses, errors: errors || result.errors, seconds: result.duration };
}

const statusNote = (m: Measured) => [...m.statuses].sort(([a], [b]) => a - b).map(([s, n]) => `${s}×${n}`).join(" ") + (m.errors ? ` errors×${m.errors}` : "");
const figure = (what: string, m: Measured): Figure => ({ what, requests: m.latencies.length, seconds: m.seconds, latencies: m.latencies, notes: statusNote(m) });

try {
  console.log(`machine: ${cpus().length} × ${cpus()[0]?.model ?? "cpu"}, Node ${process.version}; ${uptime()}`);
  let t0 = Date.now();
  const k = await seedKitchen({ cooling: COOLING, perDay: PER_DAY });
  console.log(`seeded: ${k.cooling.ids.length} batches cooling (${k.cooling.readings} readings, settled by the app), ${k.week.batches} ended over a week (${k.week.readings} readings) in ${((Date.now() - t0) / 1000).toFixed(1)} s`);
  t0 = Date.now();
  const startMs = await app.start();
  console.log(`app started in ${startMs} ms (pid ${app.pid}, ${APP_URL})`);

  const station = { cookie: `cw_station=${k.stationToken}` };
  const live = await fetch(`${APP_URL}/station`, { headers: station });
  const html = await live.text();
  const poll = await (await fetch(`${APP_URL}/station.data`, { headers: station })).text();
  const kb = (text: string) => `${(Buffer.byteLength(text) / 1024).toFixed(0)} KB (${(gzipSync(text).length / 1024).toFixed(0)} KB gzip)`;
  console.log(`live view: ${kb(html)} of HTML for ${COOLING} batches, its poll ${kb(poll)}`);
  const lots = new Set(html.match(/\bC-\d+\b/g) ?? []);
  if (live.status !== 200 || lots.size !== COOLING) throw new Error(`the live view shows ${lots.size} of ${COOLING} batches (status ${live.status})`);

  if (mode === "load" || mode === "all") {
    const figures: Figure[] = [];
    const values = new Map<string, number>();
    const nextValue = (batchId: string) => {
      const v = Math.max(80, (values.get(batchId) ?? 110) - 0.1);
      values.set(batchId, v);
      return Math.round(v * 10) / 10;
    };
    const acked: string[] = [];
    let sentPosts = 0;
    // overallRate: requests a second over all connections (paced tablets or stations); none: each sends again once answered.
    const posts = (prefix: string, seconds: number, overallRate?: number) => {
      let n = 0;
      return autocannon({
        url: APP_URL,
        connections: CONNECTIONS,
        duration: seconds,
        overallRate,
        requests: [
          {
            method: "POST",
            path: "/api/v1/batches/-/readings",
            headers: { authorization: `Bearer ${k.apiToken}`, "content-type": "application/json" },
            setupRequest: (req) => {
              const i = n++;
              sentPosts++;
              const batchId = k.cooling.ids[i % k.cooling.ids.length];
              return { ...req, path: `/api/v1/batches/${batchId}/readings`, body: JSON.stringify({ clientId: `${prefix}-${i}`, value: nextValue(batchId), unit: "F" }) };
            },
            onResponse: (status, body) => {
              const id = status >= 200 && status < 300 ? /"clientId":"([^"]+)"/.exec(body)?.[1] : undefined;
              if (id) acked.push(id);
            },
          },
        ],
      });
    };
    const liveView = (seconds: number, overallRate?: number) =>
      autocannon({ url: APP_URL, connections: LIVE_CONNECTIONS, duration: seconds, overallRate, headers: station, requests: [{ method: "GET", path: "/station" }] });

    // Warm-up: the JIT, the pools and the live view's first pass.
    await measure(autocannon({ url: APP_URL, connections: 2, duration: 2, headers: station, requests: [{ method: "GET", path: "/station" }] }));
    await measure(posts("warm-up", 2));

    // One request at a time on an idle server: what a single live view costs, compressed as a browser
    // asks for it (gzip; fetch's default) and not.
    const idle = async (path: string, headers: Record<string, string>) => {
      const m = none();
      const start = performance.now();
      for (let i = 0; i < 40; i++) {
        const t = performance.now();
        const res = await fetch(`${APP_URL}${path}`, { headers });
        await res.arrayBuffer();
        count(m, res.status, performance.now() - t);
      }
      m.seconds = (performance.now() - start) / 1000;
      return m;
    };
    if (want("idle")) {
      figures.push(figure("idle: live view GET /station, one at a time, gzip", await idle("/station", { ...station, "accept-encoding": "gzip" })));
      figures.push(figure("idle: live view GET /station, one at a time, uncompressed", await idle("/station", { ...station, "accept-encoding": "identity" })));
      figures.push(figure("idle: live view poll GET /station.data, one at a time, gzip", await idle("/station.data", { ...station, "accept-encoding": "gzip" })));
    }
    const liveAlone = want("live-alone") ? await measure(liveView(Math.max(5, SECONDS / 2))) : none();
    if (want("live-alone")) figures.push(figure(`saturated: live view GET /station alone (${LIVE_CONNECTIONS} conn., ${COOLING} active batches)`, liveAlone));
    // What an open station page fetches when it polls: the loader's data, without the HTML.
    const pollAlone = want("poll-alone") ? await measure(autocannon({ url: APP_URL, connections: LIVE_CONNECTIONS, duration: Math.max(5, SECONDS / 2), headers: station, requests: [{ method: "GET", path: "/station.data" }] })) : none();
    if (want("poll-alone")) figures.push(figure(`saturated: live view poll GET /station.data alone (${LIVE_CONNECTIONS} conn.)`, pollAlone));
    // A busy kitchen's pace (still far above a real one: a station page polls every 30 s): each tablet
    // sends a reading and each station loads the live view every PACE seconds.
    const [pacedPosts, pacedLive] = want("paced") ? await Promise.all([measure(posts("load-paced", SECONDS, CONNECTIONS / PACE)), measure(liveView(SECONDS, Math.max(1, LIVE_CONNECTIONS / PACE)))]) : [none(), none()];
    if (want("paced")) figures.push(figure(`paced: reading POST, ${CONNECTIONS} tablets × 1 per ${PACE} s, while the live view polls`, pacedPosts), figure(`paced: live view GET /station, ${LIVE_CONNECTIONS} stations × 1 per ${PACE} s, during the POSTs`, pacedLive));
    // autocannon's overallRate releases each second's requests together (a burst every second), so the
    // paced phase above measures bursts. Here each tablet and station keeps its own clock instead, at a
    // random phase, one request every PACE s on average: what a kitchen's tablets look like.
    const spread = async (seconds: number) => {
      const out = { posts: none(seconds), live: none(seconds), poll: none(seconds) };
      const end = Date.now() + seconds * 1000;
      const pause = (ms: number) => new Promise((r) => setTimeout(r, ms));
      const tablet = async (j: number) => {
        await pause(Math.random() * PACE * 1000);
        for (let n = 0; Date.now() < end; n++) {
          const batchId = k.cooling.ids[(j * 37 + n) % k.cooling.ids.length];
          const clientId = `load-spread-${j}-${n}`;
          sentPosts++;
          const t = performance.now();
          try {
            const res = await fetch(`${APP_URL}/api/v1/batches/${batchId}/readings`, {
              method: "POST",
              headers: { authorization: `Bearer ${k.apiToken}`, "content-type": "application/json" },
              body: JSON.stringify({ clientId, value: nextValue(batchId), unit: "F" }),
            });
            await res.text();
            count(out.posts, res.status, performance.now() - t);
            if (res.ok) acked.push(clientId);
          } catch {
            out.posts.errors++;
          }
          await pause(PACE * 1000 * (0.5 + Math.random()));
        }
      };
      // Stations opening the page, and open pages polling its data (what a live view does meanwhile).
      const stationPoll = async (path: string, m: Measured) => {
        await pause(Math.random() * PACE * 1000);
        while (Date.now() < end) {
          const t = performance.now();
          try {
            const res = await fetch(`${APP_URL}${path}`, { headers: station });
            await res.text();
            count(m, res.status, performance.now() - t);
          } catch {
            m.errors++;
          }
          await pause(PACE * 1000 * (0.5 + Math.random()));
        }
      };
      await Promise.all([
        ...Array.from({ length: CONNECTIONS }, (_, j) => tablet(j)),
        ...Array.from({ length: LIVE_CONNECTIONS }, () => stationPoll("/station", out.live)),
        ...Array.from({ length: LIVE_CONNECTIONS }, () => stationPoll("/station.data", out.poll)),
      ]);
      return out;
    };
    const spreadOut = want("spread") ? await spread(SECONDS) : { posts: none(), live: none(), poll: none() };
    if (want("spread"))
      figures.push(
        figure(`spread: reading POST, ${CONNECTIONS} tablets × 1 per ${PACE} s each on its own clock`, spreadOut.posts),
        figure(`spread: live view GET /station, ${LIVE_CONNECTIONS} stations × 1 per ${PACE} s, meanwhile`, spreadOut.live),
        figure(`spread: live view poll GET /station.data, ${LIVE_CONNECTIONS} open pages × 1 per ${PACE} s, meanwhile`, spreadOut.poll),
      );
    // Saturation: every connection sends again as soon as it is answered.
    const [mixedPosts, mixedLive] = want("mixed") ? await Promise.all([measure(posts("load-mixed", SECONDS)), measure(liveView(SECONDS))]) : [none(), none()];
    if (want("mixed")) figures.push(figure(`saturated: reading POST while the live view polls (${CONNECTIONS} conn.)`, mixedPosts), figure(`saturated: live view GET /station during the POSTs (${LIVE_CONNECTIONS} conn.)`, mixedLive));
    const alone = want("posts-alone") ? await measure(posts("load-alone", SECONDS)) : none();
    if (want("posts-alone")) figures.push(figure(`saturated: reading POST alone (${CONNECTIONS} conn.)`, alone));

    // A week's export, one download at a time, every byte read.
    const qa = await signedIn(k.tenant.people.qa.email, k.tenant.people.qa.password);
    const exportPath = `/sites/${k.tenant.site.id}/export.xlsx?from=${k.week.range.from}&to=${k.week.range.to}`;
    const exportMs: number[] = [];
    let bytes = 0;
    const exportStart = Date.now();
    for (let i = 0; i < (want("export") ? EXPORTS : 0); i++) {
      const s = performance.now();
      const res = await qa.get(exportPath);
      const body = await res.arrayBuffer();
      if (res.status !== 200) throw new Error(`export answered ${res.status}`);
      bytes = body.byteLength;
      exportMs.push(performance.now() - s);
    }
    if (want("export")) figures.push({ what: `week's export .xlsx (${k.week.batches} batches, sequential)`, requests: EXPORTS, seconds: (Date.now() - exportStart) / 1000, latencies: exportMs, notes: `200×${EXPORTS}, ${(bytes / 1024).toFixed(0)} KiB each` });

    // The same reading row, INSERTed straight through pg by as many loops as the app had clients.
    const bare = new pg.Pool({ connectionString: process.env.DATABASE_URL, max: POOL_MAX });
    bare.on("error", () => {});
    const bareMs: number[] = [];
    const bareEnd = Date.now() + (want("bare") ? SECONDS * 1000 : 0);
    const bareStart = Date.now();
    let m = 0;
    await Promise.all(
      Array.from({ length: CONNECTIONS }, async () => {
        while (Date.now() < bareEnd) {
          const i = m++;
          const s = performance.now();
          await bare.query(
            `INSERT INTO readings (batch_id, site_id, client_id, kind, value_entered, unit_entered, value_c, taken_at, received_at, late, taken_at_edited, source, entered_by)
             VALUES ($1, $2, $3, 'reading', $4, 'F', $5, now(), now(), false, false, 'api', NULL) ON CONFLICT DO NOTHING RETURNING *`,
            [k.bare.batchIds[i % k.bare.batchIds.length], k.bare.tenant.site.id, `bare-${i}`, 100, 37.8],
          );
          bareMs.push(performance.now() - s);
        }
      }),
    );
    const bareSeconds = (Date.now() - bareStart) / 1000;
    await bare.end();
    if (want("bare")) figures.push({ what: `bare INSERT of the reading row through pg (${CONNECTIONS} loops, pool of ${POOL_MAX})`, requests: bareMs.length, seconds: bareSeconds, latencies: bareMs });

    // Every reading answered with a 2xx is in the database exactly once.
    const { rows } = await pool.query<{ stored: number; distinct: number; acked: number }>(
      `SELECT count(*)::int AS stored, count(DISTINCT client_id)::int AS distinct,
              count(*) FILTER (WHERE client_id = ANY($1::text[]))::int AS acked
       FROM readings WHERE client_id LIKE 'load-%'`,
      [acked],
    );
    const check = rows[0];
    const ackedLoad = acked.filter((c) => c.startsWith("load-")).length;

    console.log(`\nLoad (${SECONDS} s phases; ${uptime()})`);
    printTable(figures);
    const p95 = (xs: number[]) => percentile([...xs].sort((a, b) => a - b), 95);
    if (want("posts-alone") && want("bare")) {
      const ratio = alone.latencies.length / alone.seconds / (bareMs.length / bareSeconds);
      console.log(`\nreading POST alone vs bare INSERT: ${(alone.latencies.length / alone.seconds).toFixed(1)} / ${(bareMs.length / bareSeconds).toFixed(1)} req/s = ${(ratio * 100).toFixed(1)} % (the app layer costs ${(1 / ratio).toFixed(1)}× a bare INSERT)`);
    }
    // A phase left out by BENCH_PHASES has no figures to judge.
    const verdict = (m: Measured, limit: number) => (m.latencies.length ? `${p95(m.latencies).toFixed(1)} ms ${p95(m.latencies) < limit ? "met" : "MISSED"}` : "not run");
    console.log(`target: reading POST p95 < 100 ms at ${CONNECTIONS} clients while the live view polls: spread ${verdict(spreadOut.posts, 100)}, paced ${verdict(pacedPosts, 100)}, saturated ${verdict(mixedPosts, 100)}`);
    console.log(`target: live view of ${COOLING} active batches p95 < 150 ms: spread page ${verdict(spreadOut.live, 150)}, spread poll ${verdict(spreadOut.poll, 150)}, paced during the POSTs ${verdict(pacedLive, 150)}, saturated alone ${verdict(liveAlone, 150)}`);
    console.log(`readings: ${sentPosts} POSTs sent, ${acked.length} answered 2xx (${ackedLoad} in the measured phases); stored ${check.stored}, distinct ${check.distinct}, acknowledged and stored ${check.acked}`);
    if (check.stored !== check.distinct || check.acked !== ackedLoad) {
      console.error("✗ a reading answered with a 2xx is missing, or one is stored twice");
      process.exitCode = 1;
    }
  }

  if (mode === "faults" || mode === "all") {
    const reports = await runFaults(app, k, { tablets: Number(process.env.BENCH_TABLETS ?? 50), periodMs: 500, seconds: Number(process.env.BENCH_FAULT_SECONDS ?? 20), faultAtS: 6 });
    console.log(`\nFaults (${uptime()})`);
    printFaults(reports);
    if (!reports.every(faultsHeld)) {
      console.error("✗ a queued reading was lost, doubled or refused");
      process.exitCode = 1;
    }
  }
  await pool.end().catch(() => {});
} catch (e) {
  console.error(e);
  process.exitCode = 1;
} finally {
  await app.stop().catch(() => {});
}
process.exit(process.exitCode ?? 0);
