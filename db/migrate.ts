import { migrate } from "drizzle-orm/node-postgres/migrator";
import { fileURLToPath } from "node:url";
import { connect } from "./connect";

const { pool, db } = connect();
await migrate(db, { migrationsFolder: fileURLToPath(new URL("./migrations", import.meta.url)) });
await pool.end();
