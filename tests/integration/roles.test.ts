import { beforeAll, describe, expect, it } from "vitest";
import { Client, location, signedIn } from "../helpers/client";
import { newTenant } from "../helpers/db";

type Role = "cook" | "manager" | "qa" | "admin";
type Expect = Record<Role | "anonymous", number>;

// What every route answers each role: 200 allowed, 403 signed in without the right, 302 to sign-in.
const pages: [string, Expect][] = [
  ["/sites/:site", { anonymous: 302, cook: 200, manager: 200, qa: 200, admin: 200 }],
  ["/sites/:site/team", { anonymous: 302, cook: 403, manager: 200, qa: 403, admin: 200 }],
  ["/sites/:site/settings", { anonymous: 302, cook: 403, manager: 200, qa: 403, admin: 200 }],
  ["/sites/:site/library", { anonymous: 302, cook: 403, manager: 200, qa: 403, admin: 200 }],
  ["/sites/:site/station-setup", { anonymous: 302, cook: 403, manager: 200, qa: 403, admin: 200 }],
  ["/sites/:site/api-tokens", { anonymous: 302, cook: 403, manager: 200, qa: 403, admin: 200 }],
  ["/sites/:site/review", { anonymous: 302, cook: 403, manager: 200, qa: 200, admin: 200 }],
  ["/sites/:site/records", { anonymous: 302, cook: 403, manager: 200, qa: 200, admin: 200 }],
  ["/sites/:site/records/print", { anonymous: 302, cook: 403, manager: 200, qa: 200, admin: 200 }],
  ["/records", { anonymous: 302, cook: 403, manager: 200, qa: 200, admin: 200 }],
  ["/sites/:site/analytics", { anonymous: 302, cook: 403, manager: 200, qa: 200, admin: 200 }],
  // Comparing sites is QA's and the administrators' (a manager is refused, not shown another view).
  ["/sites/:site/analytics?scope=all", { anonymous: 302, cook: 403, manager: 403, qa: 200, admin: 200 }],
  ["/sites/:site/equipment/:walkIn", { anonymous: 302, cook: 403, manager: 200, qa: 200, admin: 200 }],
  ["/sites/:site/export.xlsx", { anonymous: 302, cook: 403, manager: 200, qa: 200, admin: 200 }],
  ["/sites/:site/export.csv?sheet=readings", { anonymous: 302, cook: 403, manager: 200, qa: 200, admin: 200 }],
  ["/sites/:site/sharing", { anonymous: 302, cook: 403, manager: 200, qa: 200, admin: 200 }],
  ["/sites", { anonymous: 302, cook: 200, manager: 200, qa: 200, admin: 200 }],
  ["/account", { anonymous: 302, cook: 200, manager: 200, qa: 200, admin: 200 }],
];

// Mutations, each sent with input that is valid where allowed.
const mutations: [string, (site: string) => Record<string, string>, Expect][] = [
  [
    "/sites/:site/settings",
    () => ({ name: "Renamed", temperatureUnit: "C", timeZone: "Europe/Madrid", ruleSetCode: "fda-3-501.14-a", readingIntervalMinutes: "20", overdueGraceMinutes: "5", retentionDays: "730" }),
    { anonymous: 302, cook: 403, manager: 200, qa: 403, admin: 200 },
  ],
  ["/sites/:site/team", () => ({ intent: "invite", email: `x-${Math.random().toString(36).slice(2)}@tenant.example`, name: "New Person", role: "qa" }), { anonymous: 302, cook: 403, manager: 200, qa: 403, admin: 200 }],
  // Saved library changes redirect back to the library (post/redirect/get).
  ["/sites/:site/library", () => ({ intent: "addEquipment", name: `Reach-in ${Math.random().toString(36).slice(2, 8)}`, method: "reach-in" }), { anonymous: 302, cook: 403, manager: 302, qa: 403, admin: 302 }],
  ["/sites/:site/api-tokens", () => ({ intent: "create", name: "gateway" }), { anonymous: 302, cook: 403, manager: 200, qa: 403, admin: 200 }],
  // The new link is shown once in the answer (no redirect).
  ["/sites/:site/sharing", () => ({ intent: "create", label: "Audit", fromDate: "2025-01-01", toDate: "2025-01-07", expiry: "days", expiresInDays: "7" }), { anonymous: 302, cook: 403, manager: 200, qa: 200, admin: 200 }],
  ["/sites", () => ({ name: "Annex", temperatureUnit: "F", timeZone: "America/Chicago", ruleSetCode: "fda-3-501.14-a" }), { anonymous: 302, cook: 403, manager: 403, qa: 403, admin: 302 }],
];

describe("role × route matrix", () => {
  let tenant: Awaited<ReturnType<typeof newTenant>>;
  const clients = {} as Record<Role | "anonymous", Client>;
  beforeAll(async () => {
    tenant = await newTenant();
    clients.anonymous = new Client();
    for (const role of ["cook", "manager", "qa", "admin"] as const) {
      clients[role] = await signedIn(tenant.people[role].email, tenant.people[role].password);
    }
  });

  for (const [pattern, expected] of pages) {
    for (const who of Object.keys(expected) as (keyof Expect)[]) {
      it(`GET ${pattern} answers ${who} with ${expected[who]}`, async () => {
        const path = pattern.replace(":site", tenant.site.id).replace(":walkIn", tenant.walkIn.id);
        const res = await clients[who].get(path);
        expect(res.status).toBe(expected[who]);
        if (expected[who] === 302) expect(location(res)).toBe(`/signin?next=${encodeURIComponent(path)}`);
      });
    }
  }

  for (const [pattern, body, expected] of mutations) {
    for (const who of Object.keys(expected) as (keyof Expect)[]) {
      it(`POST ${pattern} answers ${who} with ${expected[who]}`, async () => {
        const res = await clients[who].post(pattern.replace(":site", tenant.site.id), body(tenant.site.id));
        expect(res.status).toBe(expected[who]);
      });
    }
  }

  // Shared pages are outside the signed-in shell: a session neither opens them nor sends anyone to sign in.
  for (const path of ["/shared/:token", "/shared/:token/print", "/shared/:token/batches/:walkIn", "/shared/:token/photos/:walkIn", "/shared/:token/export.xlsx", "/shared/:token/export.csv"]) {
    it(`GET ${path} with a token that names no link answers every role 404`, async () => {
      const target = path.replace(":token", "x".repeat(43)).replace(":walkIn", tenant.walkIn.id);
      for (const who of ["anonymous", "cook", "manager", "qa", "admin"] as const) expect((await clients[who].get(target)).status, who).toBe(404);
    });
  }

  it("each role's navigation lists only what that role may open", async () => {
    const nav = async (role: Role) => {
      const html = await (await clients[role].get(`/sites/${tenant.site.id}`)).text();
      const menu = /<nav aria-label="Main menu"[\s\S]*?<\/nav>/.exec(html)?.[0] ?? "";
      return [...menu.matchAll(/<a [^>]*>([^<]+)<\/a>/g)].map((m) => m[1]);
    };
    expect(await nav("cook")).toEqual(["Today", "My account"]);
    expect(await nav("qa")).toEqual(["Today", "Review", "Records", "Analytics", "My account"]);
    expect(await nav("manager")).toEqual(["Today", "Review", "Records", "Analytics", "Alerts", "Team", "Library", "Site settings", "Set up station", "My account"]);
    expect(await nav("admin")).toEqual(["Today", "Review", "Records", "Analytics", "Alerts", "Team", "Library", "Site settings", "Set up station", "Sites", "My account"]);
  });
});
