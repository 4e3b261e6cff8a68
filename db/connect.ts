import { drizzle } from "drizzle-orm/node-postgres";
import pg from "pg";
import * as schema from "./schema";

// The one way a pool and its Drizzle instance are made: by the app, the scripts and the tests.
export function connect(url = process.env.DATABASE_URL, max = 4) {
  if (!url) throw new Error("DATABASE_URL is not set");
  const pool = new pg.Pool({ connectionString: url, max, allowExitOnIdle: true });
  return { pool, db: drizzle(pool, { schema, casing: "snake_case" }) };
}
export type Db = ReturnType<typeof connect>["db"];
export type Tx = Parameters<Parameters<Db["transaction"]>[0]>[0];
