import { randomUUID } from "node:crypto";
import fc from "fast-check";
import { beforeAll, describe, expect, it, vi } from "vitest";
import { afterSweep, coolingBatch } from "../helpers/batches";
import { APP_URL, Client, signedIn } from "../helpers/client";
import { newTenant, pool } from "../helpers/db";

// Hostile input against every API route and every form the pages offer: wrong types, huge strings,
// NaN and Infinity, far dates, unknown fields, unicode, SQL and HTML metacharacters. The app must
// never answer 5xx; a 4xx carries a message; and a refused request writes nothing.

type Tenant = Awaited<ReturnType<typeof newTenant>>;
const RUNS = Number(process.env.FUZZ_RUNS ?? 25);
// The suite's 60 s per test is for the default runs; more runs (FUZZ_RUNS) get time in proportion.
vi.setConfig({ testTimeout: 60_000 * Math.max(1, RUNS / 25) });

const nasty = [
  "'; DROP TABLE readings; --",
  "' OR '1'='1",
  "<script>alert(1)</script>",
  '"><img src=x onerror=alert(1)>',
  "=HYPERLINK(\"http://evil.example\",\"x\")",
  "+1+1",
  "@SUM(A1)",
  "\u0000",
  "\u202e\u0301\u200b",
  "𝔘𝔫𝔦𝔠𝔬𝔡𝔢 ñ 汉字 🧊",
  "NaN",
  "Infinity",
  "-Infinity",
  "1e309",
  "-0",
  "0x1F",
  "0001-01-01T00:00:00Z",
  "9999-12-31T23:59:59Z",
  "275760-09-13T00:00:00.000Z",
  "2026-02-30",
  "../../etc/passwd",
  "%00%27",
  "null",
  "undefined",
  "[object Object]",
];
const hostileText = fc.oneof(
  fc.constantFrom(...nasty),
  fc.string({ maxLength: 40 }),
  fc.string({ unit: "grapheme", maxLength: 20 }),
  fc.constantFrom("x".repeat(5_000), "9".repeat(400), "é".repeat(70_000)),
);
const hostileJson: fc.Arbitrary<unknown> = fc.oneof(
  hostileText,
  fc.double(),
  fc.integer(),
  fc.constantFrom(1e308, -1e308, Number.MAX_SAFE_INTEGER + 2, -1, 0, 0.5),
  fc.boolean(),
  fc.constant(null),
  fc.array(fc.oneof(fc.integer(), hostileText), { maxLength: 3 }),
  fc.dictionary(fc.string({ maxLength: 8 }), fc.oneof(fc.integer(), hostileText), { maxKeys: 3 }),
  fc.date({ min: new Date(-8.64e15), max: new Date(8.64e15), noInvalidDate: true }).map((d) => d.toISOString()),
);
// Bodies that are not JSON objects at all, or JSON that JavaScript reads as Infinity.
const rawBodies = fc.constantFrom("", "not json", '{"value": NaN}', '{"value": 1e999, "unit": "F"}', "[]", "null", '"text"', "{", '{"__proto__": {"admin": true}}', "\u0000");

/** A valid body with some of its fields replaced by hostile values, some removed, and unknown ones added. */
function mutated(base: Record<string, unknown>) {
  const keys = Object.keys(base);
  return fc
    .record({
      replace: fc.subarray(keys, { minLength: 1 }),
      values: fc.array(hostileJson, { minLength: keys.length, maxLength: keys.length }),
      drop: fc.subarray(keys, { maxLength: 1 }),
      extra: fc.dictionary(fc.constantFrom("admin", "siteId", "state", "id", "receivedAt", "late", "zz"), hostileJson, { maxKeys: 2 }),
    })
    .map(({ replace, values, drop, extra }) => {
      const out: Record<string, unknown> = { ...base };
      replace.forEach((k) => (out[k] = values[keys.indexOf(k)]));
      for (const k of drop) delete out[k];
      return JSON.stringify({ ...out, ...extra });
    });
}

/**
 * What a refused request must leave alone: the number of rows of every table (the log of refused
 * sign-ins and PINs excepted, the rate-limit counters, and the alerts the sweep raises meanwhile for
 * other tests' batches), and the content of the tenant's own rows
 * that a form could change.
 */
async function snapshot(t: Tenant) {
  const { rows: tables } = await pool.query<{ table_name: string }>(
    "select table_name from information_schema.tables where table_schema = 'public' and table_type = 'BASE TABLE' and table_name not in ('rate_limits', 'audit_events', 'alert_events', 'alert_deliveries') order by 1",
  );
  const counts = await pool.query(tables.map((t) => `select '${t.table_name}' as t, count(*)::int as n from "${t.table_name}"`).join(" union all "));
  const audit = await pool.query("select count(*)::int as n from audit_events where action not in ('user.sign_in_failed', 'user.pin_failed', 'user.pin_locked') and action not like 'alert.%' and actor_kind <> 'system'");
  const content = await pool.query(
    `select
       (select md5(string_agg(s::text, '|' order by s.id)) from sites s where s.organisation_id = $1) as sites,
       (select md5(string_agg(concat_ws(',', u.id, u.name, u.email, u.password_hash, u.pin_hash, u.language, u.active, u.session_version), '|' order by u.id)) from users u where u.organisation_id = $1) as users,
       (select md5(string_agg(m::text, '|' order by m.id)) from memberships m join sites s on s.id = m.site_id where s.organisation_id = $1) as memberships,
       (select md5(string_agg(p::text, '|' order by p.id)) from products p where p.site_id = $2) as products,
       (select md5(string_agg(concat_ws(',', e.id, e.name, e.method, e.active), '|' order by e.id)) from equipment e where e.site_id = $2) as equipment,
       (select md5(string_agg(concat_ws(',', b.id, b.state, b.lot_code, b.method, b.fill_depth_mm, b.pan_size, b.lid, b.equipment_id, b.ended_at), '|' order by b.id)) from batches b where b.site_id = $2) as batches,
       (select md5(string_agg(r::text, '|' order by r.id)) from alert_recipients r where r.site_id = $2) as recipients`,
    [t.org.id, t.site.id],
  );
  return { counts: counts.rows, audit: audit.rows[0].n, content: content.rows[0] };
}

/** Checks one answer: never 5xx; a 4xx says why; a 4xx changed nothing. */
async function judge(t: Tenant, label: string, before: Awaited<ReturnType<typeof snapshot>>, res: Response) {
  const body = await res.text();
  expect(res.status, `${label} → ${res.status}: ${body.slice(0, 300)}`).toBeLessThan(500);
  if (res.status >= 400) {
    // 431: Node's own HTTP parser refuses a request line or headers over 16 KB before any app code
    // runs; the status is the whole message.
    if (res.status !== 431) expect(body.trim().length, `${label}: a ${res.status} must say why`).toBeGreaterThan(0);
    const type = res.headers.get("content-type") ?? "";
    if (type.includes("json")) {
      const json = JSON.parse(body);
      expect(json.errors ?? json.error ?? json.message, `${label}: a JSON refusal names the problem`).toBeTruthy();
    }
    expect(await snapshot(t), `${label}: a refused request wrote something`).toEqual(before);
  }
}

describe("hostile input", () => {
  let t: Tenant;
  let token: string;
  let batchId: string;

  beforeAll(async () => {
    t = await newTenant();
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    const html = await (await manager.post(`/sites/${t.site.id}/api-tokens`, { intent: "create", name: "fuzz" })).text();
    token = /data-testid="new-token">(cw_[A-Za-z0-9_-]+)</.exec(html)![1];
    batchId = (await coolingBatch(t, { lotCode: "FUZZ-1", startedMinutesAgo: 15 })).id;
    await afterSweep(t);
  });

  // An answer that never comes fails its own request (with what was sent) rather than the whole test's time.
  const api = (path: string, body: string, method = "POST") =>
    fetch(new URL(path, APP_URL), { method, headers: { authorization: `Bearer ${token}`, "content-type": "application/json" }, body: method === "GET" ? undefined : body, signal: AbortSignal.timeout(20_000) }).catch((e: Error) => {
      throw new Error(`${method} ${path} ${body.slice(0, 200)}: ${e.message}`, { cause: e });
    });

  const jsonRoutes = () =>
    [
      ["/api/v1/batches", { clientId: randomUUID(), productId: t.product.id, lotCode: "FZ-9", pan: { size: "gn-1/1", depthMm: 65, fillDepthMm: 40 }, method: "blast-chiller", start: { value: 150, unit: "F" } }],
      [`/api/v1/batches/${batchId}/readings`, { clientId: randomUUID(), value: 120, unit: "F", takenAt: new Date(Date.now() - 60_000).toISOString(), probe: "P-2" }],
      [`/api/v1/batches/${batchId}/actions`, { kind: "change_method", clientId: randomUUID(), method: "ice-bath-stirred", lid: false }],
      ["/api/v1/predict", { shape: "slab", depthMm: 50, faces: { top: { h: 10 }, bottom: { h: 10 } }, food: { k: 0.5, rho: 1050, cp: 3600 }, initialC: 60, ambientC: 3, timesS: [0, 600], targetsC: [21, 5] }],
    ] as const;

  it("every text field of every API route refuses a NUL or a control character with a 400 naming the field", async () => {
    let checked = 0;
    for (const [path, base] of jsonRoutes()) {
      // Each string in the valid body, at any depth, in turn.
      const leaves: string[][] = [];
      const walk = (v: unknown, at: string[]) => {
        if (typeof v === "string") leaves.push(at);
        else if (v && typeof v === "object") for (const [k, w] of Object.entries(v)) walk(w, [...at, k]);
      };
      walk(base, []);
      for (const at of leaves) {
        const body = structuredClone(base) as Record<string, unknown>;
        const parent = at.slice(0, -1).reduce<Record<string, unknown>>((o, k) => o[k] as Record<string, unknown>, body);
        parent[at.at(-1)!] = "P-2\u0000";
        const before = await snapshot(t);
        const res = await api(path, JSON.stringify(body));
        await judge(t, `POST ${path} ${at.join(".")}=NUL`, before, res);
        expect(res.status, `${path} ${at.join(".")}`).toBe(400);
        checked++;
      }
    }
    // clientId, productId, lotCode, pan.size, method, start.unit; clientId, unit, takenAt, probe; kind, clientId, method; shape.
    expect(checked).toBe(14);
  });

  for (const index of [0, 1, 2, 3]) {
    it(`API route ${index + 1} of 4 refuses hostile bodies with a 4xx and writes nothing`, async () => {
      const [path, base] = jsonRoutes()[index];
      await fc.assert(
        fc.asyncProperty(fc.oneof({ weight: 4, arbitrary: mutated(base as Record<string, unknown>) }, { weight: 1, arbitrary: rawBodies }), async (body) => {
          const before = await snapshot(t);
          const res = await api(path, body);
          await judge(t, `POST ${path} ${body.slice(0, 120)}`, before, res);
        }),
        { numRuns: RUNS },
      );
    });
  }

  it("GET /api/v1/batches with hostile query parameters answers 4xx (or the list), never 5xx", async () => {
    await fc.assert(
      fc.asyncProperty(hostileText, fc.constantFrom("status", "site", "since", "zz"), async (value, key) => {
        const before = await snapshot(t);
        const res = await api(`/api/v1/batches?${key}=${encodeURIComponent(value)}`, "", "GET");
        await judge(t, `GET /api/v1/batches?${key}=${value.slice(0, 40)}`, before, res);
      }),
      { numRuns: RUNS },
    );
  });

  it("POST /api/v1/photos refuses what is not a photo, and hostile fields", async () => {
    await fc.assert(
      fc.asyncProperty(fc.uint8Array({ maxLength: 2000 }), hostileText, fc.constantFrom("image/jpeg", "image/png", "text/plain", "application/octet-stream"), async (bytes, field, type) => {
        const form = new FormData();
        form.set("photo", new File([bytes], "probe.jpg", { type }));
        form.set("batchId", field);
        const before = await snapshot(t);
        const res = await fetch(new URL("/api/v1/photos", APP_URL), { method: "POST", headers: { authorization: `Bearer ${token}` }, body: form });
        await judge(t, `POST /api/v1/photos (${bytes.length} bytes, ${type})`, before, res);
        expect(res.status).toBeGreaterThanOrEqual(400);
      }),
      { numRuns: RUNS },
    );
  });
});

// ---------------------------------------------------------------------------------------------
// Forms: every form each page offers, posted with its own fields carrying hostile values.

type FormSpec = { action: string; fields: [string, string][] };

/** The POST forms of a page: where each posts, and its fields with the values the page put in them. */
function formsOf(html: string, pagePath: string): FormSpec[] {
  const out: FormSpec[] = [];
  for (const m of html.matchAll(/<form\b([^>]*)>([\s\S]*?)<\/form>/g)) {
    const attrs = m[1];
    if (!/method="post"/i.test(attrs)) continue;
    const action = /action="([^"]*)"/.exec(attrs)?.[1]?.replace(/&amp;/g, "&") || pagePath;
    const fields: [string, string][] = [];
    for (const f of m[2].matchAll(/<(input|select|textarea|button)\b([^>]*)>/g)) {
      const name = /\bname="([^"]+)"/.exec(f[2])?.[1];
      if (!name) continue;
      const value = /\bvalue="([^"]*)"/.exec(f[2])?.[1] ?? "";
      if (f[1] === "button" && !/type="submit"|^(?![\s\S]*type=)/.test(f[2])) continue;
      fields.push([name, value.replace(/&amp;/g, "&").replace(/&quot;/g, '"')]);
    }
    out.push({ action, fields });
  }
  return out;
}

const formValue = fc.oneof(hostileText, fc.integer().map(String), fc.double().map(String), fc.constant(""));

async function fuzzPageForms(t: Tenant, client: Client, pagePath: string, skip: RegExp = /^$/) {
  const page = await client.get(pagePath);
  expect(page.status, `GET ${pagePath}`).toBe(200);
  // Signing out is not input; it would only end the session the other forms need.
  const forms = formsOf(await page.text(), pagePath).filter((f) => f.action !== "/signout" && !skip.test(f.fields.map(([k, v]) => `${k}=${v}`).join("&")));
  expect(forms.length, `forms on ${pagePath}`).toBeGreaterThan(0);
  for (const form of forms) {
    const names = [...new Set(form.fields.map(([k]) => k))];
    const intent = form.fields.find(([k]) => k === "intent")?.[1];
    // Every field once with the characters PostgreSQL text cannot hold (NUL) or no keyboard types:
    // the random runs below meet them only now and then.
    for (const name of names.filter((n) => n !== "intent")) {
      for (const bad of ["Lot\u0000 7", "\u0007"]) {
        const body: Record<string, string> = Object.fromEntries(form.fields);
        body[name] = bad;
        const before = await snapshot(t);
        const res = await client.request(form.action, { form: body });
        await judge(t, `POST ${form.action} intent=${intent ?? "-"} ${name}=${JSON.stringify(bad)}`, before, res);
      }
    }
    await fc.assert(
      fc.asyncProperty(
        fc.subarray(names.filter((n) => n !== "intent"), { minLength: names.some((n) => n !== "intent") ? 1 : 0 }),
        fc.array(formValue, { minLength: names.length, maxLength: names.length }),
        fc.dictionary(fc.constantFrom("siteId", "userId", "role", "zz"), formValue, { maxKeys: 2 }),
        async (replace, values, extra) => {
          const body: Record<string, string> = {};
          for (const [k, v] of form.fields) body[k] = v;
          replace.forEach((k) => (body[k] = values[names.indexOf(k)]));
          for (const [k, v] of Object.entries(extra)) if (!(k in body)) body[k] = v;
          const before = await snapshot(t);
          const res = await client.request(form.action, { form: body });
          await judge(t, `POST ${form.action} intent=${intent ?? "-"} ${JSON.stringify(body).slice(0, 200)}`, before, res);
        },
      ),
      { numRuns: RUNS },
    );
  }
}

describe("hostile input in forms", () => {
  // Each page gets its own organisation, so what one form legitimately changes (a renamed site, a
  // person deactivated) cannot spoil the next page's checks.
  const pages: [string, "admin" | "manager" | "station" | "anonymous", (t: Tenant, batchId: string) => string, RegExp?][] = [
    ["account", "manager", () => "/account"],
    ["site settings", "admin", (t) => `/sites/${t.site.id}/settings`],
    ["team", "admin", (t) => `/sites/${t.site.id}/team`],
    ["library", "manager", (t) => `/sites/${t.site.id}/library`],
    ["pans", "manager", (t) => `/sites/${t.site.id}/pans`],
    ["api tokens", "manager", (t) => `/sites/${t.site.id}/api-tokens`],
    ["station set-up", "manager", (t) => `/sites/${t.site.id}/station-setup`],
    ["alerts", "manager", (t) => `/sites/${t.site.id}/alerts`],
    ["batch page", "manager", (t, b) => `/sites/${t.site.id}/batches/${b}`],
    ["sites", "admin", () => "/sites"],
    ["forgot password", "anonymous", () => "/forgot-password"],
    ["station", "station", () => "/station"],
    ["station new batch", "station", () => "/station/batches/new"],
  ];
  for (const [name, who, path] of pages) {
    it(`${name}: every form refuses hostile values with a 4xx that writes nothing (or accepts them safely)`, async () => {
      const t = await newTenant();
      const batch = await coolingBatch(t, { lotCode: "FORM-1", startedMinutesAgo: 12 });
      const manager = await signedIn(t.people.manager.email, t.people.manager.password);
      let client: Client;
      if (who === "anonymous") client = new Client();
      else if (who === "station") {
        expect((await manager.post(`/sites/${t.site.id}/station-setup`, { intent: "create", name: "Fuzz tablet" })).status).toBeLessThan(400);
        client = new Client();
        client.cookies.set("cw_station", manager.cookies.get("cw_station")!);
        // The cook signs in on the tablet with their PIN, as before any entry.
        expect((await client.post("/station", { intent: "pin", userId: t.people.cook.id, pin: t.people.cook.pin })).status).toBe(302);
      } else client = who === "manager" ? manager : await signedIn(t.people.admin.email, t.people.admin.password);
      await afterSweep(t);
      await fuzzPageForms(t, client, path(t, batch.id));
    });
  }
});

describe("hostile search parameters and paths", () => {
  it("every page a manager opens answers a NUL in any search parameter or path segment without a 5xx", async () => {
    const t = await newTenant();
    const batch = await coolingBatch(t, { lotCode: "NUL-1", startedMinutesAgo: 12 });
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    const site = `/sites/${t.site.id}`;
    // Every parameter name a loader reads, each set to a NUL.
    const query = ["q", "from", "to", "product", "method", "equipment", "outcome", "cook", "late", "unverified", "sort", "dir", "page", "size", "reason", "show", "edit", "id", "done", "warn", "alert", "next", "sheet", "site", "status"]
      .map((k) => `${k}=%00`)
      .join("&");
    const pages = ["/", "/account", "/sites", "/records", site, ...["settings", "team", "library", "pans", "station-setup", "api-tokens", "review", "records", "records/print", "analytics", `batches/${batch.id}`, "alerts", "export.csv", "export.xlsx", "sharing"].map((p) => `${site}/${p}`)];
    const paths = ["/invite/%00", "/reset-password/%00", "/shared/%00", "/shared/%00/export.csv", "/photos/%00", `${site}/batches/%00`, `${site}/equipment/%00`, "/sites/%00/review"];
    for (const path of [...pages.map((p) => `${p}?${query}`), ...paths]) {
      const res = await manager.get(path);
      const body = await res.text();
      expect(res.status, `GET ${path} → ${res.status}: ${body.slice(0, 200)}`).toBeLessThan(500);
    }
    // The review queue's search keeps working and says the unusable text was set aside.
    const review = await manager.get(`${site}/review?q=Lot%00`);
    expect(review.status).toBe(200);
    expect(await review.text()).toContain("could not be used and was left out");
  });
});

describe("hostile input from a station tablet", () => {
  it("the outbox's reading endpoint refuses hostile bodies with a 4xx and writes nothing", async () => {
    const t = await newTenant();
    const batch = await coolingBatch(t, { lotCode: "TAB-1", startedMinutesAgo: 12 });
    const manager = await signedIn(t.people.manager.email, t.people.manager.password);
    expect((await manager.post(`/sites/${t.site.id}/station-setup`, { intent: "create", name: "Fuzz tablet" })).status).toBeLessThan(400);
    const tablet = new Client();
    tablet.cookies.set("cw_station", manager.cookies.get("cw_station")!);
    await afterSweep(t);
    const base = { clientId: randomUUID(), value: 120, unit: "F", takenAt: new Date(Date.now() - 60_000).toISOString(), enteredAt: new Date().toISOString() };
    await fc.assert(
      fc.asyncProperty(fc.oneof({ weight: 4, arbitrary: mutated(base) }, { weight: 1, arbitrary: rawBodies }), async (body) => {
        const before = await snapshot(t);
        const res = await tablet.request(`/station/batches/${batch.id}/readings`, { method: "POST", headers: { "content-type": "application/json" }, body });
        await judge(t, `POST /station/batches/:id/readings ${body.slice(0, 120)}`, before, res);
      }),
      { numRuns: RUNS },
    );
  });
});
