import { createHash } from "node:crypto";
import { eq } from "drizzle-orm";
import { beforeAll, describe, expect, it } from "vitest";
import { shareLinks } from "~db/schema";
import type { RouteConfigEntry } from "@react-router/dev/routes";
import routes from "../../app/routes";
import { Client, signedIn } from "../helpers/client";
import { db, newTenant } from "../helpers/db";
import { makeShareLink, sharedKitchen, uploadPhoto } from "../helpers/share";

// Every route of app/routes.ts × every kind of caller, GET, with the status each must get. The list of
// routes is read from app/routes.ts itself: a route added there without a row here fails the first test.

type Who = "anonymous" | "cook" | "manager" | "qa" | "admin" | "foreign" | "station" | "apiToken" | "linkValid" | "linkExpired" | "linkRevoked";
const everyone: Who[] = ["anonymous", "cook", "manager", "qa", "admin", "foreign", "station", "apiToken", "linkValid", "linkExpired", "linkRevoked"];

/** Every full path pattern in the route config (layouts add no segment). */
function patterns(entries: RouteConfigEntry[], parent = ""): string[] {
  return entries.flatMap((e) => {
    const here = e.path === undefined ? parent : [parent, e.path].filter(Boolean).join("/");
    const own = e.path !== undefined || e.index ? [`/${here}`.replace(/\/$/, "") || "/"] : [];
    return [...own, ...patterns(e.children ?? [], here)];
  });
}

// A shorthand: signed-in roles of the site, then who else.
const R = 302; // to sign-in
const site = (cook: number, manager: number, qa: number, admin: number): Partial<Record<Who, number>> => ({ anonymous: R, cook, manager, qa, admin, foreign: 404, station: R, apiToken: R, linkValid: R, linkExpired: R, linkRevoked: R });
const allSignedIn = (status: number): Partial<Record<Who, number>> => ({ anonymous: R, cook: status, manager: status, qa: status, admin: status, foreign: status, station: R, apiToken: R, linkValid: R, linkExpired: R, linkRevoked: R });
const open = (status: number): Partial<Record<Who, number>> => Object.fromEntries(everyone.map((w) => [w, status]));
const shared = (valid: number): Partial<Record<Who, number>> => ({ ...open(404), linkValid: valid, linkExpired: 410, linkRevoked: 410 });

const expected: Record<string, Partial<Record<Who, number>>> = {
  // Public pages: the home sends a signed-in person to their site, others to sign in.
  "/": { ...open(302) },
  "/signin": { ...open(200), cook: 302, manager: 302, qa: 302, admin: 302, foreign: 302 },
  "/signout": open(302),
  "/forgot-password": open(200),
  // An unknown token shows its own "this link does not work" page.
  "/reset-password/:token": open(200),
  "/invite/:token": open(200),
  "/language": open(302),
  "/auth/*": open(200),
  "/healthz": open(200),
  // The API: a session or a site token; without one, 401.
  "/api/v1/predict": { ...open(405) },
  "/api/v1/batches": { ...open(401), cook: 200, manager: 200, qa: 200, admin: 200, foreign: 200, apiToken: 200 },
  "/api/v1/batches/:id/readings": { ...open(405) },
  "/api/v1/batches/:id/actions": { ...open(405) },
  "/api/v1/photos": { ...open(405) },
  // A photo: the site's people and its tablets; anyone else 404 (not even whether it exists).
  "/photos/:id/:size?": { ...open(404), cook: 200, manager: 200, qa: 200, admin: 200, station: 200 },
  // The station: a tablet that is set up; otherwise the page explains how to set one up.
  "/station": open(200),
  "/station/batches/new": { ...open(302) },
  // A batch's page on a tablet: the station itself may show it; entries still need a cook's PIN.
  "/station/batches/:batchId": { ...open(302), station: 200 },
  "/station/batches/:batchId/readings": { ...open(405) },
  "/station/photos": { ...open(405) },
  "/sites/:siteId/records/print": site(403, 200, 200, 200),
  "/shared/:token": shared(200),
  "/shared/:token/batches/:batchId": shared(200),
  "/shared/:token/print": shared(200),
  "/shared/:token/photos/:id/:size?": shared(200),
  "/shared/:token/export.xlsx": shared(200),
  "/shared/:token/export.csv": shared(200),
  "/account": allSignedIn(200),
  "/sites": allSignedIn(200),
  "/records": { ...allSignedIn(200), cook: 403 },
  "/sites/:siteId": site(200, 200, 200, 200),
  "/sites/:siteId/settings": site(403, 200, 403, 200),
  "/sites/:siteId/team": site(403, 200, 403, 200),
  "/sites/:siteId/library": site(403, 200, 403, 200),
  "/sites/:siteId/pans": site(403, 200, 403, 200),
  "/sites/:siteId/station-setup": site(403, 200, 403, 200),
  "/sites/:siteId/api-tokens": site(403, 200, 403, 200),
  "/sites/:siteId/review": site(403, 200, 200, 200),
  "/sites/:siteId/records": site(403, 200, 200, 200),
  "/sites/:siteId/analytics": site(403, 200, 200, 200),
  "/sites/:siteId/batches/:batchId": site(403, 200, 200, 200),
  "/sites/:siteId/equipment/:equipmentId": site(403, 200, 200, 200),
  "/sites/:siteId/alerts": site(403, 200, 403, 200),
  "/sites/:siteId/export.xlsx": site(403, 200, 200, 200),
  "/sites/:siteId/export.csv": site(403, 200, 200, 200),
  "/sites/:siteId/sharing": site(403, 200, 200, 200),
};

describe("access matrix generated from app/routes.ts", () => {
  const all = patterns(routes as RouteConfigEntry[]);

  it("every route has its row of expected answers, and no row names a route that is gone", () => {
    expect([...new Set(all)].sort()).toEqual(Object.keys(expected).sort());
    for (const [p, row] of Object.entries(expected)) expect(Object.keys(row).sort(), p).toEqual([...everyone].sort());
  });

  const clients = {} as Record<Who, Client>;
  const tokens = {} as Record<"linkValid" | "linkExpired" | "linkRevoked", string>;
  let k: Awaited<ReturnType<typeof sharedKitchen>>;

  beforeAll(async () => {
    k = await sharedKitchen();
    const other = await newTenant();
    const people = k.t.people;
    clients.anonymous = new Client();
    [clients.cook, clients.manager, clients.qa, clients.admin, clients.foreign] = await Promise.all([
      signedIn(people.cook.email, people.cook.password),
      signedIn(people.manager.email, people.manager.password),
      signedIn(people.qa.email, people.qa.password),
      signedIn(people.admin.email, people.admin.password),
      signedIn(other.people.admin.email, other.people.admin.password),
    ]);
    // A tablet set up by the manager: it carries only its station cookie.
    const setup = await signedIn(people.manager.email, people.manager.password);
    expect((await setup.post(`/sites/${k.t.site.id}/station-setup`, { intent: "create", name: "Matrix tablet" })).status).toBeLessThan(400);
    clients.station = new Client();
    clients.station.cookies.set("cw_station", setup.cookies.get("cw_station")!);
    // A site API token, sent as a bearer header.
    const html = await (await clients.manager.post(`/sites/${k.t.site.id}/api-tokens`, { intent: "create", name: "matrix" })).text();
    const bearer = /data-testid="new-token">(cw_[A-Za-z0-9_-]+)</.exec(html)![1];
    clients.apiToken = new Client();
    const send = clients.apiToken.request.bind(clients.apiToken);
    clients.apiToken.request = (path, init = {}) => send(path, { ...init, headers: { authorization: `Bearer ${bearer}`, ...init.headers } });
    for (const w of ["linkValid", "linkExpired", "linkRevoked"] as const) {
      const made = await makeShareLink(k.t, clients.qa, { label: `Matrix ${w}`, fromDate: k.range.from, toDate: k.range.to });
      tokens[w] = made.token!;
      clients[w] = new Client();
    }
    const hash = (token: string) => createHash("sha256").update(token).digest("hex");
    await db.update(shareLinks).set({ expiresAt: new Date(Date.now() - 60_000) }).where(eq(shareLinks.tokenHash, hash(tokens.linkExpired)));
    await db.update(shareLinks).set({ revokedAt: new Date(), revokedBy: k.t.people.qa.id }).where(eq(shareLinks.tokenHash, hash(tokens.linkRevoked)));
    await uploadPhoto(k.cook);
  });

  /** The pattern with real ids of the kitchen (and the caller's own share token, or a stranger's). */
  function pathFor(p: string, who: Who) {
    const token = who === "linkValid" || who === "linkExpired" || who === "linkRevoked" ? tokens[who] : "x".repeat(43);
    return p
      .replace(":siteId", k.t.site.id)
      .replace(":batchId", k.batch.id)
      .replace(":equipmentId", k.t.walkIn.id)
      .replace("/photos/:id/:size?", `/photos/${k.batch.photoId}`)
      .replace(":id", k.batch.id)
      .replace(":token", p.startsWith("/shared") ? token : "not-a-real-token")
      .replace("/auth/*", "/auth/csrf")
      .replace(/^\/api\/v1\/batches$/, "/api/v1/batches?status=active")
      .replace(/export\.csv$/, "export.csv?sheet=readings");
  }

  it("answers each caller of each route as the table says", async () => {
    const wrong: string[] = [];
    for (const p of Object.keys(expected)) {
      for (const who of everyone) {
        const path = pathFor(p, who);
        const res = await clients[who].get(path);
        await res.arrayBuffer();
        if (res.status !== expected[p][who]) wrong.push(`${p} as ${who}: ${res.status}, expected ${expected[p][who]}`);
      }
    }
    expect(wrong).toEqual([]);
  });
});
