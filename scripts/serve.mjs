// The production server: the built app behind express, as react-router-serve serves it (compressed
// answers, the built assets cached for a year, public/ for an hour), in one process per core.
//   node scripts/serve.mjs [build/server/index.js]
// HOST (127.0.0.1) and PORT (3000) as for react-router-serve; WEB_CONCURRENCY: how many app
// processes (default: the cores this machine offers; 1 serves from this process alone).
// The processes share nothing but PostgreSQL, which the app is written for: each one works the
// alert queue and sweeps, under the sweep's advisory lock (app/server/alert-worker.server.ts).
import cluster from "node:cluster";
import { availableParallelism } from "node:os";
import { resolve } from "node:path";
import { pathToFileURL } from "node:url";

const processes = Math.max(1, Math.floor(Number(process.env.WEB_CONCURRENCY ?? availableParallelism())) || 1);
const host = process.env.HOST || "127.0.0.1";
const port = Number(process.env.PORT || 3000);
process.env.NODE_ENV ??= "production";

if (cluster.isPrimary && processes > 1) await primary();
else await serve();

/** Starts the app processes, starts again one that ends on its own, and stops them all on a signal. */
async function primary() {
  let stopping = false;
  const quickExits = [];
  const fork = () => cluster.fork();
  cluster.on("exit", (worker, code, signal) => {
    if (stopping) return;
    console.error(`[chillwright] app process ${worker.process.pid} ended (${signal ?? `exit ${code}`}); starting another`);
    // An app that cannot start (a bad setting, PostgreSQL's role missing) would otherwise be started
    // again and again: five ends within a minute stop the server.
    const now = Date.now();
    quickExits.push(now);
    while (quickExits.length && now - quickExits[0] > 60_000) quickExits.shift();
    if (quickExits.length >= 5) {
      console.error("[chillwright] the app keeps ending; stopping (see the messages above)");
      stop(1);
      return;
    }
    setTimeout(fork, 500);
  });
  const stop = async (code) => {
    if (stopping) return;
    stopping = true;
    // Each app process finishes what it is sending (at most 5 s, app/entry.server.tsx).
    setTimeout(() => process.exit(code), 8000).unref();
    const workers = Object.values(cluster.workers ?? {}).filter(Boolean);
    await Promise.all(workers.map((w) => new Promise((done) => (w.isDead() ? done() : (w.once("exit", done), w.process.kill("SIGTERM"))))));
    process.exit(code);
  };
  for (const signal of ["SIGTERM", "SIGINT"]) process.once(signal, () => void stop(0));
  for (let i = 0; i < processes; i++) fork();
  let listening = 0;
  cluster.on("listening", () => {
    if (++listening === processes) console.log(`[chillwright] http://${host}:${port} (${processes} app processes)`);
  });
}

/** One app process: express with the app's request handler. */
async function serve() {
  const [{ default: express }, { default: compression }, { createRequestHandler }] = await Promise.all([import("express"), import("compression"), import("@react-router/express")]);
  const buildPath = resolve(process.argv[2] ?? "build/server/index.js");
  const build = await import(pathToFileURL(buildPath).href);
  const client = resolve(buildPath, "../../client");
  const app = express();
  app.disable("x-powered-by");
  app.use(logSlow);
  app.use(drainUnreadBodies);
  app.use(compression());
  app.use(coalesceWrites);
  app.use("/assets", express.static(resolve(client, "assets"), { immutable: true, maxAge: "1y" }));
  app.use(express.static(client));
  app.use(express.static("public", { maxAge: "1h" }));
  app.all("*", createRequestHandler({ build, mode: process.env.NODE_ENV }));
  const server = app.listen(port, host, () => {
    if (!cluster.isWorker) console.log(`[chillwright] http://${host}:${port}`);
  });
  // An idle connection is closed by its client, not here. Node closes one after 5 s; a client that
  // sends its next request on it just then gets a reset instead of an answer: an ECONNRESET on a GET
  // in the hostile-input tests, whose fetch keeps an idle connection 4 s (undici's default as
  // remembered, not looked up here) by a timer that fires late while its event loop is busy.
  // Headers may then take longer than the idle wait.
  server.keepAliveTimeout = 65_000;
  server.headersTimeout = 66_000;
  server.on("error", (e) => {
    console.error(`[chillwright] cannot listen on ${host}:${port}: ${e.message}`);
    process.exit(1);
  });
  // The app's own handlers (app/entry.server.tsx) stop its alert worker and end the process.
  for (const signal of ["SIGTERM", "SIGINT"]) process.once(signal, () => server.close());
}

const COALESCE_BYTES = 64 * 1024;

/**
 * Gathers what an answer writes within one turn of the event loop (up to 64 KB) into one write. The
 * router writes a page or its data as the many small chunks the renderer makes and flushes after
 * each, so the compressor would otherwise compress and flush each one on its own, a round trip to
 * zlib's threads per chunk that waits behind every other request: the live view of 200 batches is a
 * few hundred of them. Registered after compression, so it writes into it.
 */
function coalesceWrites(_req, res, next) {
  const write = res.write.bind(res);
  const end = res.end.bind(res);
  const flush = typeof res.flush === "function" ? res.flush.bind(res) : () => {};
  let parts = [];
  let size = 0;
  let timer = null;
  const take = () => {
    const body = parts.length === 1 ? parts[0] : Buffer.concat(parts, size);
    parts = [];
    size = 0;
    return body;
  };
  const release = () => {
    if (timer) clearImmediate(timer);
    timer = null;
    if (!size) return true;
    const ok = write(take());
    flush();
    return ok;
  };
  const keep = (chunk, encoding) => {
    if (chunk === undefined || chunk === null) return;
    const buf = typeof chunk === "string" ? Buffer.from(chunk, typeof encoding === "string" ? encoding : "utf8") : Buffer.isBuffer(chunk) ? chunk : Buffer.from(chunk.buffer, chunk.byteOffset, chunk.byteLength);
    if (buf.length === 0) return;
    parts.push(buf);
    size += buf.length;
  };
  res.write = (chunk, encoding, callback) => {
    keep(chunk, encoding);
    const done = typeof encoding === "function" ? encoding : callback;
    if (done) process.nextTick(done);
    if (size >= COALESCE_BYTES) return release();
    timer ??= setImmediate(release);
    return true;
  };
  // Flushed with the gathered write instead.
  res.flush = () => {};
  res.end = (chunk, encoding, callback) => {
    if (typeof chunk === "function") return finish(chunk);
    keep(chunk, encoding);
    return finish(typeof encoding === "function" ? encoding : callback);
  };
  const finish = (callback) => {
    if (timer) clearImmediate(timer);
    timer = null;
    if (callback) res.once("finish", callback);
    return size ? end(take()) : end();
  };
  next();
}

// As much as a refused photo upload reads away itself (app/server/photos.server.ts, DISCARD_AT_MOST).
const DRAIN_BYTES = 64 * 1024 * 1024;

/**
 * Reads away, once an answer is sent, the rest of a request body the app did not read (a signed-out
 * POST answered with a redirect, a refusal before an upload is parsed). The router's request stream
 * reads the first chunks and pauses the request when nobody takes them, and Node reads away only a
 * body nobody began to read: the rest stayed in the connection, which answered nothing more, and a
 * client that sent its next request on it waited for ever (a 420 KB form post, then two small ones
 * on the same connection: the third had no answer in 30 s). A body past 64 MB closes the connection.
 */
function drainUnreadBodies(req, res, next) {
  res.once("finish", () => {
    if (req.complete || req.destroyed) return;
    let left = DRAIN_BYTES;
    req.removeAllListeners("data");
    req.on("data", (chunk) => {
      left -= chunk.length;
      if (left < 0) req.socket.destroy();
    });
    req.resume();
  });
  next();
}

/** Logs an answer that took more than 5 s, finished or not, with this process's id. */
function logSlow(req, res, next) {
  const start = performance.now();
  res.once("close", () => {
    const s = (performance.now() - start) / 1000;
    if (s > 5) console.error(`[chillwright] ${res.writableFinished ? "slow answer" : "answer cut off"}: ${req.method} ${req.originalUrl.slice(0, 200)} ${res.statusCode} after ${s.toFixed(1)} s (process ${process.pid})`);
  });
  next();
}
