import { drizzle } from "drizzle-orm/node-postgres";
import pg from "pg";
import * as schema from "./schema";

// The one way a pool and its Drizzle instance are made: by the app, the scripts and the tests.
export function connect(url = process.env.DATABASE_URL, max = 4) {
  if (!url) throw new Error("DATABASE_URL is not set");
  const pool = new pg.Pool({ connectionString: url, max, allowExitOnIdle: true });
  // A connection the server ends (a restart, a failover) must not end the process: unheard, its error
  // would. An idle one leaves the pool by itself and the next query opens another; one checked out (a
  // transaction, the sweep's lock) fails its query, and the pool drops it when it comes back.
  pool.on("error", (e) => console.error(`database: an idle connection was closed (${e.message}); the next query opens a new one`));
  pool.on("connect", (client) => client.on("error", () => {}));
  return { pool, db: drizzle(pool, { schema, casing: "snake_case" }) };
}
export type Db = ReturnType<typeof connect>["db"];
export type Tx = Parameters<Parameters<Db["transaction"]>[0]>[0];
