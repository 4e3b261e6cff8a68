import { and, asc, eq } from "drizzle-orm";
import { data, redirect } from "react-router";
import { memberships, sites, users } from "~db/schema";
import { getSession } from "./auth.server";
import { db } from "./db.server";

export type Role = "cook" | "manager" | "qa" | "admin";

export type SessionUser = {
  id: string;
  organisationId: string;
  name: string;
  email: string;
  language: "en" | "es";
  memberships: { siteId: string; siteName: string; role: Role }[];
};

// Who can do what, in one place. Admins hold every right at their sites.
export const can: Record<"manageTeam" | "manageSite" | "setUpStation" | "manageOrganisation" | "viewSite" | "review" | "verify" | "manageAlerts" | "exportRecords" | "shareRecords" | "analytics" | "compareSites", readonly Role[]> = {
  manageTeam: ["manager", "admin"],
  // The review queue and batch records: QA reads them, managers act on them.
  review: ["manager", "qa", "admin"],
  verify: ["manager", "admin"],
  // The spreadsheet of a period's records: QA's job, and the managers'.
  exportRecords: ["manager", "qa", "admin"],
  // Read-only links for inspectors and auditors: whoever may export the records may share them.
  shareRecords: ["manager", "qa", "admin"],
  // Pass rates and stage-1 times of a period; QA and admins also compare the sites where they hold that role.
  analytics: ["manager", "qa", "admin"],
  compareSites: ["qa", "admin"],
  manageAlerts: ["manager", "admin"],
  manageSite: ["manager", "admin"],
  setUpStation: ["manager", "admin"],
  manageOrganisation: ["admin"],
  viewSite: ["cook", "manager", "qa", "admin"],
};

const cache = new WeakMap<Request, Promise<SessionUser | null>>();

/** The signed-in, active user with their memberships, or null. Read once per request. */
export function getUser(request: Request): Promise<SessionUser | null> {
  let pending = cache.get(request);
  if (!pending) {
    pending = loadUser(request);
    cache.set(request, pending);
  }
  return pending;
}

async function loadUser(request: Request): Promise<SessionUser | null> {
  const session = await getSession(request);
  if (!session) return null;
  const userId = session.userId;
  const rows = await db
    .select({
      id: users.id,
      organisationId: users.organisationId,
      name: users.name,
      email: users.email,
      language: users.language,
      active: users.active,
      sessionVersion: users.sessionVersion,
      siteId: memberships.siteId,
      siteName: sites.name,
      role: memberships.role,
    })
    .from(users)
    .leftJoin(memberships, eq(memberships.userId, users.id))
    .leftJoin(sites, eq(sites.id, memberships.siteId))
    .where(eq(users.id, userId))
    .orderBy(asc(sites.name));
  const first = rows[0];
  if (!first || !first.active || first.sessionVersion !== session.version) return null;
  return {
    id: first.id,
    organisationId: first.organisationId,
    name: first.name,
    email: first.email,
    language: first.language,
    memberships: rows.filter((r) => r.siteId).map((r) => ({ siteId: r.siteId!, siteName: r.siteName!, role: r.role! })),
  };
}

export async function requireUser(request: Request): Promise<SessionUser> {
  const user = await getUser(request);
  if (!user) {
    const url = new URL(request.url);
    throw redirect(`/signin?next=${encodeURIComponent(url.pathname + url.search)}`);
  }
  return user;
}

export function notFound(): never {
  throw data("Not found", { status: 404 });
}

export function forbidden(): never {
  throw data("Forbidden", { status: 403 });
}

const uuidPattern = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;
export const isUuid = (s: string | undefined): s is string => !!s && uuidPattern.test(s);

/**
 * The user, the site and their role there, when their role is one of `roles`.
 * A site of another organisation, or one that does not exist, is 404; a site of the user's own
 * organisation where they lack the role is 403.
 */
export async function requireRole(request: Request, roles: readonly Role[], siteId: string | undefined) {
  const user = await requireUser(request);
  if (!isUuid(siteId)) notFound();
  const [site] = await db
    .select()
    .from(sites)
    .where(and(eq(sites.id, siteId), eq(sites.organisationId, user.organisationId)));
  if (!site) notFound();
  const membership = user.memberships.find((m) => m.siteId === siteId);
  if (!membership || !roles.includes(membership.role)) forbidden();
  return { user, site, role: membership.role };
}

/** For organisation-wide screens: the user must be an admin at one of the organisation's sites at least. */
export async function requireOrgRole(request: Request, roles: readonly Role[]) {
  const user = await requireUser(request);
  if (!user.memberships.some((m) => roles.includes(m.role))) forbidden();
  return user;
}

/** Where a user lands after signing in: their first site's home. */
export function homePath(user: SessionUser) {
  const first = user.memberships[0];
  return first ? `/sites/${first.siteId}` : "/account";
}
