import { connect } from "~db/connect";
import { env } from "./env.server";

export const { pool, db } = connect(env.DATABASE_URL, env.DB_POOL_MAX);
export type { Db, Tx } from "~db/connect";
