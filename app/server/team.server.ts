import { and, desc, eq, gt, isNull } from "drizzle-orm";
import { invitations, memberships, users } from "~db/schema";
import { recordAudit } from "./audit.server";
import { hashSecret } from "./crypto.server";
import { db } from "./db.server";
import type { Role, SessionUser } from "./guards.server";

export function listTeam(siteId: string) {
  return db
    .select({
      userId: users.id,
      name: users.name,
      email: users.email,
      role: memberships.role,
      active: users.active,
      pinLocked: users.pinLockedAt,
      hasPin: users.pinHash,
    })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.siteId, siteId))
    .orderBy(users.name)
    .then((rows) => rows.map((r) => ({ ...r, pinLocked: !!r.pinLocked, hasPin: !!r.hasPin })));
}

export function listPendingInvitations(siteId: string) {
  return db
    .select({ id: invitations.id, email: invitations.email, name: invitations.name, role: invitations.role, expiresAt: invitations.expiresAt })
    .from(invitations)
    .where(and(eq(invitations.siteId, siteId), isNull(invitations.acceptedAt), isNull(invitations.revokedAt), gt(invitations.expiresAt, new Date())))
    .orderBy(desc(invitations.createdAt));
}

/** The member of this site that an action targets, or null (the route answers 404). */
export async function findMember(site: { id: string; organisationId: string }, userId: string) {
  const [m] = await db
    .select({ userId: users.id, name: users.name, role: memberships.role, membershipId: memberships.id, active: users.active })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.siteId, site.id), eq(memberships.userId, userId), eq(users.organisationId, site.organisationId)));
  return m ?? null;
}

/**
 * Whether the actor may change a person's account (PIN, active flag), which counts at every site:
 * an administrator may; a manager only when the person holds no administrator role anywhere and works
 * only at sites the manager runs.
 */
export async function mayChangeAccount(actor: SessionUser, targetUserId: string) {
  if (actor.memberships.some((m) => m.role === "admin")) return true;
  const theirs = await db.select({ siteId: memberships.siteId, role: memberships.role }).from(memberships).where(eq(memberships.userId, targetUserId));
  const runs = new Set(actor.memberships.filter((m) => m.role === "manager").map((m) => m.siteId));
  return theirs.every((m) => m.role !== "admin" && runs.has(m.siteId));
}

type Site = { id: string; organisationId: string };
const actorOf = (u: SessionUser) => ({ kind: "user" as const, userId: u.id });

export async function changeRole(actor: SessionUser, site: Site, member: { membershipId: string; userId: string; role: Role }, role: Role) {
  await db.transaction(async (tx) => {
    await tx.update(memberships).set({ role }).where(eq(memberships.id, member.membershipId));
    await recordAudit(tx, {
      actor: actorOf(actor),
      organisationId: site.organisationId,
      siteId: site.id,
      action: "membership.role_changed",
      entity: "membership",
      entityId: member.membershipId,
      data: { userId: member.userId, before: member.role, after: role },
    });
  });
}

export async function setPin(actor: SessionUser, site: Site, userId: string, pin: string) {
  const pinHash = await hashSecret(pin);
  await db.transaction(async (tx) => {
    await tx.update(users).set({ pinHash, pinFailedAttempts: 0, pinLockedAt: null }).where(and(eq(users.id, userId), eq(users.organisationId, site.organisationId)));
    await recordAudit(tx, {
      actor: actorOf(actor),
      organisationId: site.organisationId,
      siteId: site.id,
      action: "user.pin_set",
      entity: "user",
      entityId: userId,
    });
  });
}

export async function setActive(actor: SessionUser, site: Site, userId: string, active: boolean) {
  await db.transaction(async (tx) => {
    await tx.update(users).set({ active }).where(and(eq(users.id, userId), eq(users.organisationId, site.organisationId)));
    await recordAudit(tx, {
      actor: actorOf(actor),
      organisationId: site.organisationId,
      siteId: site.id,
      action: active ? "user.reactivated" : "user.deactivated",
      entity: "user",
      entityId: userId,
    });
  });
}

export async function revokeInvitation(actor: SessionUser, site: Site, invitationId: string) {
  return db.transaction(async (tx) => {
    const [inv] = await tx
      .update(invitations)
      .set({ revokedAt: new Date() })
      .where(and(eq(invitations.id, invitationId), eq(invitations.siteId, site.id), isNull(invitations.acceptedAt), isNull(invitations.revokedAt)))
      .returning({ id: invitations.id });
    if (!inv) return false;
    await recordAudit(tx, {
      actor: actorOf(actor),
      organisationId: site.organisationId,
      siteId: site.id,
      action: "invitation.revoked",
      entity: "invitation",
      entityId: inv.id,
    });
    return true;
  });
}
