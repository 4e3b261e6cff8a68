import { and, eq, gt, isNull, sql } from "drizzle-orm";
import { invitations, memberships, organisations, passwordResetTokens, sites, users } from "~db/schema";
import { getI18n, type Language } from "~/lib/i18n";
import { recordAudit } from "./audit.server";
import { hashSecret, hashToken, makeToken } from "./crypto.server";
import { db } from "./db.server";
import { env } from "./env.server";
import type { Role, SessionUser } from "./guards.server";
import { sendMail } from "./mail.server";

const RESET_MINUTES = 60;
const INVITE_DAYS = 7;

/** Sends a single-use reset link when the e-mail has an active account; says nothing either way. */
export async function requestPasswordReset(email: string, lang: Language) {
  const [user] = await db
    .select({ id: users.id, organisationId: users.organisationId, language: users.language })
    .from(users)
    .where(and(eq(users.email, email.toLowerCase()), eq(users.active, true)));
  if (!user) return;
  const token = makeToken();
  await db.transaction(async (tx) => {
    await tx.insert(passwordResetTokens).values({
      userId: user.id,
      tokenHash: hashToken(token),
      expiresAt: new Date(Date.now() + RESET_MINUTES * 60_000),
    });
    await recordAudit(tx, {
      actor: { kind: "system", label: "password-reset" },
      organisationId: user.organisationId,
      action: "user.password_reset_requested",
      entity: "user",
      entityId: user.id,
    });
  });
  const t = getI18n(user.language ?? lang).t;
  await sendMail({
    to: email,
    subject: t("forgot.mailSubject"),
    lines: [t("forgot.mailIntro"), t("forgot.mailIgnore")],
    action: { label: t("forgot.mailAction"), url: `${env.APP_URL}/reset-password/${token}` },
  });
}

export async function findResetToken(token: string) {
  const [row] = await db
    .select({ id: passwordResetTokens.id, userId: passwordResetTokens.userId })
    .from(passwordResetTokens)
    .innerJoin(users, eq(users.id, passwordResetTokens.userId))
    .where(
      and(
        eq(passwordResetTokens.tokenHash, hashToken(token)),
        isNull(passwordResetTokens.usedAt),
        gt(passwordResetTokens.expiresAt, new Date()),
        eq(users.active, true),
      ),
    );
  return row ?? null;
}

/** Uses the token (once) and sets the password; false when the token is not valid. */
export async function resetPassword(token: string, password: string) {
  const passwordHash = await hashSecret(password);
  return db.transaction(async (tx) => {
    const [used] = await tx
      .update(passwordResetTokens)
      .set({ usedAt: new Date() })
      .where(
        and(
          eq(passwordResetTokens.tokenHash, hashToken(token)),
          isNull(passwordResetTokens.usedAt),
          gt(passwordResetTokens.expiresAt, new Date()),
        ),
      )
      .returning({ userId: passwordResetTokens.userId });
    if (!used) return false;
    const [user] = await tx
      .update(users)
      .set({ passwordHash, sessionVersion: sql`${users.sessionVersion} + 1` })
      .where(and(eq(users.id, used.userId), eq(users.active, true)))
      .returning({ id: users.id, organisationId: users.organisationId });
    if (!user) return false;
    await recordAudit(tx, {
      actor: { kind: "user", userId: user.id },
      organisationId: user.organisationId,
      action: "user.password_reset",
      entity: "user",
      entityId: user.id,
    });
    return true;
  });
}

export type InviteResult = { ok: true; added: boolean } | { ok: false; field: "email"; reason: "alreadyMember" | "otherOrganisation" };

/** Invites a person to a site by e-mail; an existing colleague of the organisation is added at once. */
export async function inviteToSite(
  inviter: SessionUser,
  site: { id: string; name: string; organisationId: string },
  input: { email: string; name: string; role: Role },
): Promise<InviteResult> {
  const email = input.email.toLowerCase();
  const [existing] = await db.select({ id: users.id, organisationId: users.organisationId }).from(users).where(eq(users.email, email));
  if (existing && existing.organisationId !== site.organisationId) return { ok: false, field: "email", reason: "otherOrganisation" };
  if (existing) {
    const [member] = await db
      .select({ id: memberships.id })
      .from(memberships)
      .where(and(eq(memberships.userId, existing.id), eq(memberships.siteId, site.id)));
    if (member) return { ok: false, field: "email", reason: "alreadyMember" };
    await db.transaction(async (tx) => {
      const [m] = await tx.insert(memberships).values({ userId: existing.id, siteId: site.id, role: input.role }).returning({ id: memberships.id });
      await recordAudit(tx, {
        actor: { kind: "user", userId: inviter.id },
        organisationId: site.organisationId,
        siteId: site.id,
        action: "membership.created",
        entity: "membership",
        entityId: m.id,
        data: { userId: existing.id, role: input.role },
      });
    });
    return { ok: true, added: true };
  }
  const token = makeToken();
  const expiresAt = new Date(Date.now() + INVITE_DAYS * 24 * 3600_000);
  const [org] = await db.select({ name: organisations.name }).from(organisations).where(eq(organisations.id, site.organisationId));
  await db.transaction(async (tx) => {
    const [inv] = await tx
      .insert(invitations)
      .values({ organisationId: site.organisationId, siteId: site.id, email, name: input.name, role: input.role, tokenHash: hashToken(token), invitedBy: inviter.id, expiresAt })
      .returning({ id: invitations.id });
    await recordAudit(tx, {
      actor: { kind: "user", userId: inviter.id },
      organisationId: site.organisationId,
      siteId: site.id,
      action: "invitation.created",
      entity: "invitation",
      entityId: inv.id,
      data: { email, role: input.role },
    });
  });
  const t = getI18n(inviter.language).t;
  const role = t(`roles.${input.role}`);
  await sendMail({
    to: email,
    subject: t("invite.mailSubject", { site: site.name }),
    lines: [
      t("invite.mailIntro", { inviter: inviter.name, site: site.name, org: org.name, role }),
      t("invite.mailExpiry", { expires: expiresAt.toISOString().slice(0, 10) }),
    ],
    action: { label: t("invite.mailAction"), url: `${env.APP_URL}/invite/${token}` },
  });
  return { ok: true, added: false };
}

export async function findInvitation(token: string) {
  const [row] = await db
    .select({
      id: invitations.id,
      email: invitations.email,
      name: invitations.name,
      role: invitations.role,
      siteId: invitations.siteId,
      siteName: sites.name,
      organisationId: invitations.organisationId,
      organisationName: organisations.name,
      inviterName: users.name,
    })
    .from(invitations)
    .innerJoin(sites, eq(sites.id, invitations.siteId))
    .innerJoin(organisations, eq(organisations.id, invitations.organisationId))
    .innerJoin(users, eq(users.id, invitations.invitedBy))
    .where(and(eq(invitations.tokenHash, hashToken(token)), isNull(invitations.acceptedAt), isNull(invitations.revokedAt), gt(invitations.expiresAt, new Date())));
  return row ?? null;
}

class InvitationRefused extends Error {}

/** Accepts an invitation once: makes (or joins) the account, sets the password, adds the membership. */
export async function acceptInvitation(token: string, input: { name: string; password: string }) {
  const passwordHash = await hashSecret(input.password);
  const accepted = db.transaction(async (tx) => {
    const [inv] = await tx
      .update(invitations)
      .set({ acceptedAt: new Date() })
      .where(and(eq(invitations.tokenHash, hashToken(token)), isNull(invitations.acceptedAt), isNull(invitations.revokedAt), gt(invitations.expiresAt, new Date())))
      .returning();
    if (!inv) return null;
    let [user] = await tx.select({ id: users.id, organisationId: users.organisationId }).from(users).where(eq(users.email, inv.email));
    // An account of another organisation never joins this one through an invitation.
    if (user && user.organisationId !== inv.organisationId) throw new InvitationRefused();
    // An account made meanwhile under the same e-mail keeps its own password; it only gains the site.
    if (!user) {
      [user] = await tx
        .insert(users)
        .values({ organisationId: inv.organisationId, name: input.name, email: inv.email, passwordHash, emailVerified: new Date() })
        .returning({ id: users.id, organisationId: users.organisationId });
    }
    await tx.insert(memberships).values({ userId: user.id, siteId: inv.siteId, role: inv.role }).onConflictDoNothing();
    await recordAudit(tx, {
      actor: { kind: "user", userId: user.id },
      organisationId: inv.organisationId,
      siteId: inv.siteId,
      action: "invitation.accepted",
      entity: "invitation",
      entityId: inv.id,
      data: { role: inv.role },
    });
    return { userId: user.id };
  });
  return accepted.catch((e) => {
    if (e instanceof InvitationRefused) return null;
    throw e;
  });
}
