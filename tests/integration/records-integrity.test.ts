import { createHash, randomBytes, randomUUID } from "node:crypto";
import pg from "pg";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { actionConfirmations, auditEvents, shareLinks, shareLinkUses } from "~db/schema";
import { addAction, endedBatch, minutesAgo, sign } from "../helpers/batches";
import { type Client, signedIn } from "../helpers/client";
import { db, newTenant, pool } from "../helpers/db";

// The record cannot be changed or deleted: not through the app, not through SQL as the role the app
// connects with (chillwright_runtime), and not through SQL as the owner either (the triggers).
const APPEND_ONLY = ["readings", "corrective_actions", "verifications", "action_confirmations", "share_link_uses", "audit_events"] as const;

describe("records integrity", () => {
  let t: Awaited<ReturnType<typeof newTenant>>;
  let runtime: pg.Pool;
  let batchId: string;
  let api: string;
  let manager: Client;
  // This tenant's rows of each table (the alert sweep keeps appending other tenants' audit events meanwhile).
  const scope: Record<(typeof APPEND_ONLY)[number], string> = {
    readings: "t.site_id = $1",
    corrective_actions: "t.site_id = $1",
    verifications: "t.site_id = $1",
    action_confirmations: "t.site_id = $1",
    share_link_uses: "t.link_id in (select id from share_links where site_id = $1)",
    audit_events: "t.organisation_id = $1",
  };
  const snapshot = async () => {
    const out: Record<string, string> = {};
    for (const table of APPEND_ONLY) {
      const { rows } = await pool.query(`select md5(coalesce(string_agg(t::text, '|' order by t::text), '')) as h, count(*)::int as n from ${table} t where ${scope[table]}`, [table === "audit_events" ? t.org.id : t.site.id]);
      out[table] = `${rows[0].n}:${rows[0].h}`;
    }
    return out;
  };

  beforeAll(async () => {
    if (!process.env.RUNTIME_DATABASE_URL) throw new Error("RUNTIME_DATABASE_URL is not set (npm test sets it)");
    runtime = new pg.Pool({ connectionString: process.env.RUNTIME_DATABASE_URL, max: 2 });
    t = await newTenant();
    const b = await endedBatch(t, { state: "cooled", startedAt: minutesAgo(300), endedAt: minutesAgo(60), lotCode: "INTEG-1" });
    batchId = b.id;
    const action = await addAction(t, b.id);
    await db.insert(actionConfirmations).values({ correctiveActionId: action.id, batchId: b.id, siteId: t.site.id, confirmedBy: t.people.manager.id });
    await sign(t, b.id, { readings: 1, actions: 1 });
    const [link] = await db
      .insert(shareLinks)
      .values({ organisationId: t.org.id, siteId: t.site.id, tokenHash: createHash("sha256").update(randomBytes(32)).digest("hex"), label: "County inspection", fromDate: "2026-01-01", toDate: "2026-12-31", expiresAt: new Date(Date.now() + 86_400_000), createdBy: t.people.qa.id })
      .returning();
    await db.insert(shareLinkUses).values({ linkId: link.id, method: "GET", target: "records", path: "/shared/…", outcome: "ok", status: 200 });
    await db.insert(auditEvents).values({ organisationId: t.org.id, siteId: t.site.id, actorKind: "system", action: "integrity.test", entity: "batch", entityId: b.id });
    manager = await signedIn(t.people.manager.email, t.people.manager.password);
    const created = await manager.post(`/sites/${t.site.id}/api-tokens`, { intent: "create", name: "integrity" });
    api = /data-testid="new-token">(cw_[A-Za-z0-9_-]+)</.exec(await created.text())![1];
  });
  afterAll(async () => {
    await runtime?.end();
  });

  it("the app's role may not update, delete or truncate any append-only table (permission denied, 42501)", async () => {
    const before = await snapshot();
    for (const table of APPEND_ONLY) {
      for (const statement of [`update ${table} set id = id`, `delete from ${table}`, `truncate ${table} cascade`]) {
        await expect(runtime.query(statement), `${statement} as the app's role`).rejects.toMatchObject({ code: "42501" });
      }
    }
    expect(await snapshot()).toEqual(before);
  });

  it("the app's role may not switch the triggers off, drop them, replace their function, or drop a table", async () => {
    const before = await snapshot();
    const attempts = [
      "alter table readings disable trigger all",
      "alter table verifications disable trigger verifications_append_only",
      "drop trigger readings_append_only on readings",
      "create or replace function refuse_change() returns trigger language plpgsql as $$ begin return new; end $$",
      "drop table audit_events cascade",
      "alter table readings rename to readings_old",
    ];
    for (const sql of attempts) await expect(runtime.query(sql), sql).rejects.toMatchObject({ code: "42501" });
    // Replication mode (which skips triggers) is for superusers only.
    await expect(runtime.query("set session_replication_role = replica")).rejects.toMatchObject({ code: "42501" });
    const { rows } = await runtime.query("select rolsuper, rolbypassrls, rolcreaterole from pg_roles where rolname = current_user");
    expect(rows[0]).toEqual({ rolsuper: false, rolbypassrls: false, rolcreaterole: false });
    expect(await snapshot()).toEqual(before);
  });

  it("the app's role still does its job: it reads and appends", async () => {
    const { rows } = await runtime.query("select count(*)::int as n from readings where batch_id = $1", [batchId]);
    expect(rows[0].n).toBe(1);
    await runtime.query("insert into audit_events (organisation_id, actor_kind, action, entity) values ($1, 'system', 'integrity.append', 'test')", [t.org.id]);
  });

  it("even the owner's SQL is refused by the triggers", async () => {
    const before = await snapshot();
    for (const table of APPEND_ONLY) {
      await expect(pool.query(`update ${table} set id = id`)).rejects.toThrow(/append-only/);
      await expect(pool.query(`delete from ${table}`)).rejects.toThrow(/append-only/);
      await expect(pool.query(`truncate ${table} cascade`)).rejects.toThrow(/append-only/);
    }
    expect(await snapshot()).toEqual(before);
  });

  it("through the app: a reading cannot be replaced or deleted; a correction is a new row and the original stays", async () => {
    const before = await snapshot();
    const url = `/api/v1/batches/${batchId}/readings`;
    const headers = { authorization: `Bearer ${api}`, "content-type": "application/json" };
    for (const method of ["PUT", "PATCH", "DELETE"]) {
      const res = await fetch(new URL(url, process.env.APP_URL), { method, headers, body: method === "DELETE" ? undefined : JSON.stringify({ value: 1, unit: "F" }) });
      expect(res.status, `${method} ${url}`).toBe(405);
    }
    expect(await snapshot()).toEqual(before);
    const { rows: [original] } = await pool.query("select id, value_entered from readings where batch_id = $1", [batchId]);
    const res = await fetch(new URL(url, process.env.APP_URL), {
      method: "POST",
      headers,
      body: JSON.stringify({ clientId: randomUUID(), value: 149, unit: "F", takenAt: minutesAgo(5).toISOString(), corrects: { readingId: original.id, reason: "Typed 150 for 149" } }),
    });
    expect(res.status).toBe(201);
    const { rows } = await pool.query("select id, value_entered, corrects_reading_id from readings where batch_id = $1 order by received_at", [batchId]);
    expect(rows).toHaveLength(2);
    expect(rows[0]).toMatchObject({ id: original.id, value_entered: original.value_entered });
    expect(rows[1]).toMatchObject({ value_entered: 149, corrects_reading_id: original.id });
  });
});
