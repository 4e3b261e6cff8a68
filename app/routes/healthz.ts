import { sql } from "drizzle-orm";
import { workerId } from "~/server/alert-worker.server";
import { db } from "~/server/db.server";

export async function loader() {
  await db.execute(sql`select 1`);
  return Response.json({ ok: true, worker: workerId });
}
