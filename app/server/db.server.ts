import { sql } from "drizzle-orm";
import type { PgColumn } from "drizzle-orm/pg-core";
import { connect } from "~db/connect";
import { env } from "./env.server";

export const { pool, db } = connect(env.DATABASE_URL, env.DB_POOL_MAX);
export type { Db, Tx } from "~db/connect";

/** `column` is one of the uuids of placeholder `name` (an array), for prepared statements: `= any($n::uuid[])`. */
export const inUuids = (column: PgColumn, name: string) => sql`${column} = any(${sql.placeholder(name)}::uuid[])`;
