// Share links: a read-only window on one site's records for a range of dates, for an inspector or
// an auditor. The token (256 random bits) is shown once; only its SHA-256 is stored. Every request
// made with a link is logged in share_link_uses (append-only), allowed or not.
import { and, count, desc, eq, gte, inArray, isNull, lt, max } from "drizzle-orm";
import { data } from "react-router";
import { batches, organisations, photos, readings, shareLinks, shareLinkUses, sites, users } from "~db/schema";
import { getI18n, LANGUAGE_COOKIE, resolveLanguage, type Language } from "~/lib/i18n";
import { ExportRangeSchema, rangeInstants, SheetSchema, type ExportSheet } from "~/lib/records-export";
import { withinRange } from "~/lib/share-links";
import { siteTime } from "~/lib/site-time";
import { recordAudit } from "./audit.server";
import { hashToken, makeToken } from "./crypto.server";
import { db } from "./db.server";
import { env } from "./env.server";
import type { SessionUser } from "./guards.server";
import { sendMail } from "./mail.server";
import type { Exporter } from "./export.server";
import { clientAddress } from "./rate-limit.server";
import { readCookie } from "./station.server";

type Site = typeof sites.$inferSelect;
export type ShareLink = typeof shareLinks.$inferSelect;
export type ShareTarget = "records" | "batch" | "photo" | "export-xlsx" | "export-csv" | "print";
type Outcome = "ok" | "expired" | "revoked" | "refused";

// makeToken() gives 32 bytes as base64url: 43 characters. Anything else is not one of ours.
const TOKEN_PATTERN = /^[A-Za-z0-9_-]{43}$/;

export const shareUrl = (token: string) => `${env.APP_URL}/shared/${token}`;

export async function createShareLink(user: SessionUser, site: Site, input: { label: string; fromDate: string; toDate: string; expiresAt: Date }) {
  const token = makeToken();
  const link = await db.transaction(async (tx) => {
    const [row] = await tx
      .insert(shareLinks)
      .values({ organisationId: site.organisationId, siteId: site.id, tokenHash: hashToken(token), label: input.label, fromDate: input.fromDate, toDate: input.toDate, expiresAt: input.expiresAt, createdBy: user.id })
      .returning();
    await recordAudit(tx, {
      actor: { kind: "user", userId: user.id },
      organisationId: site.organisationId,
      siteId: site.id,
      action: "share_link.created",
      entity: "share_link",
      entityId: row.id,
      data: { label: input.label, from: input.fromDate, to: input.toDate, expiresAt: input.expiresAt.toISOString() },
    });
    return row;
  });
  return { token, link };
}

/** The site's links, newest first, with how often each was used and when last. */
export async function listShareLinks(siteId: string) {
  const uses = db
    .select({ linkId: shareLinkUses.linkId, uses: count().as("uses"), lastUseAt: max(shareLinkUses.at).as("last_use_at") })
    .from(shareLinkUses)
    .groupBy(shareLinkUses.linkId)
    .as("u");
  const rows = await db
    .select({
      id: shareLinks.id,
      label: shareLinks.label,
      fromDate: shareLinks.fromDate,
      toDate: shareLinks.toDate,
      expiresAt: shareLinks.expiresAt,
      createdAt: shareLinks.createdAt,
      revokedAt: shareLinks.revokedAt,
      madeBy: users.name,
      uses: uses.uses,
      lastUseAt: uses.lastUseAt,
    })
    .from(shareLinks)
    .innerJoin(users, eq(users.id, shareLinks.createdBy))
    .leftJoin(uses, eq(uses.linkId, shareLinks.id))
    .where(eq(shareLinks.siteId, siteId))
    .orderBy(desc(shareLinks.createdAt));
  return rows.map((r) => ({ ...r, uses: Number(r.uses ?? 0), lastUseAt: r.lastUseAt ? new Date(r.lastUseAt) : null }));
}

/** The latest uses of the given links (at most `perLink` each), newest first. */
export async function listShareUses(linkIds: string[], perLink = 50) {
  if (!linkIds.length) return new Map<string, (typeof shareLinkUses.$inferSelect)[]>();
  const rows = await db
    .select()
    .from(shareLinkUses)
    .where(inArray(shareLinkUses.linkId, linkIds))
    .orderBy(desc(shareLinkUses.at))
    .limit(perLink * linkIds.length);
  const byLink = new Map<string, (typeof shareLinkUses.$inferSelect)[]>();
  for (const r of rows) {
    const list = byLink.get(r.linkId) ?? [];
    if (list.length < perLink) list.push(r);
    byLink.set(r.linkId, list);
  }
  return byLink;
}

/** Withdraws a link of this site; false when there is no such active link here. */
export async function revokeShareLink(user: SessionUser, site: Site, linkId: string) {
  return db.transaction(async (tx) => {
    const [row] = await tx
      .update(shareLinks)
      .set({ revokedAt: new Date(), revokedBy: user.id })
      .where(and(eq(shareLinks.id, linkId), eq(shareLinks.siteId, site.id), isNull(shareLinks.revokedAt)))
      .returning({ id: shareLinks.id, label: shareLinks.label });
    if (row) {
      await recordAudit(tx, {
        actor: { kind: "user", userId: user.id },
        organisationId: site.organisationId,
        siteId: site.id,
        action: "share_link.revoked",
        entity: "share_link",
        entityId: row.id,
        data: { label: row.label },
      });
    }
    return !!row;
  });
}

/** Sends the link to someone: the site, the dates, the expiry, who sent it, and the caution. */
export async function emailShareLink(sender: SessionUser, site: Site, link: ShareLink, token: string, to: string, lang: Language) {
  const t = getI18n(lang).t;
  const [org] = await db.select({ name: organisations.name }).from(organisations).where(eq(organisations.id, site.organisationId));
  const expires = siteTime(link.expiresAt.getTime(), site.timeZone, lang);
  await sendMail({
    to,
    subject: t("share.mail.subject", { site: site.name, organisation: org?.name ?? "" }),
    lines: [
      t("share.mail.intro", { name: sender.name, email: sender.email, site: site.name, organisation: org?.name ?? "" }),
      t("share.mail.range", { from: link.fromDate, to: link.toDate, zone: site.timeZone }),
      t("share.mail.expires", { time: expires }),
      t("share.mail.readOnly"),
      t("app.caution"),
      t("share.mail.keep"),
    ],
    action: { label: t("share.mail.open"), url: shareUrl(token) },
  });
  await recordAudit(db, {
    actor: { kind: "user", userId: sender.id },
    organisationId: site.organisationId,
    siteId: site.id,
    action: "share_link.emailed",
    entity: "share_link",
    entityId: link.id,
    data: { to },
  });
}

type Resolved = { link: ShareLink; site: Site; organisation: string; madeBy: string };

/** The link a token names, with its site, or why it cannot be used. */
export async function resolveShareToken(token: string | undefined, now = Date.now()): Promise<{ ok: true; share: Resolved } | { ok: false; reason: "unknown" } | { ok: false; reason: "expired" | "revoked"; share: Resolved }> {
  if (!token || !TOKEN_PATTERN.test(token)) return { ok: false, reason: "unknown" };
  const [row] = await db
    .select({ link: shareLinks, site: sites, organisation: organisations.name, madeBy: users.name })
    .from(shareLinks)
    .innerJoin(sites, eq(sites.id, shareLinks.siteId))
    .innerJoin(organisations, eq(organisations.id, shareLinks.organisationId))
    .innerJoin(users, eq(users.id, shareLinks.createdBy))
    .where(eq(shareLinks.tokenHash, hashToken(token)));
  if (!row) return { ok: false, reason: "unknown" };
  if (row.link.revokedAt) return { ok: false, reason: "revoked", share: row };
  if (row.link.expiresAt.getTime() <= now) return { ok: false, reason: "expired", share: row };
  return { ok: true, share: row };
}

/** The path asked for, with the token left out: the log must not hold what opens the records. */
export function sharePath(request: Request) {
  const url = new URL(request.url);
  return url.pathname.replace(/^\/shared\/[^/.]+/, "/shared/…") + url.search;
}

export async function logShareUse(request: Request, linkId: string, target: ShareTarget, outcome: Outcome, status: number) {
  await db.insert(shareLinkUses).values({
    linkId,
    method: request.method.toUpperCase(),
    target,
    path: sharePath(request).slice(0, 2000),
    outcome,
    status,
    address: clientAddress(request),
    userAgent: request.headers.get("user-agent")?.slice(0, 500) ?? null,
  });
}

// Page routes throw data for their error boundary; files answer plain text.
type Kind = "page" | "file";
const text = (status: number, body: string, headers: Record<string, string> = {}) => new Response(body, { status, headers: { "content-type": "text/plain; charset=utf-8", ...headers } });

export type ShareRefusal = { reason: "unknown" } | { reason: "expired"; expiresAt: number; timeZone: string } | { reason: "revoked" } | { reason: "readOnly" } | { reason: "notInScope" };

function refusal(kind: Kind, status: number, body: ShareRefusal, headers: Record<string, string> = {}): never {
  if (kind === "page") throw data(body, { status, headers });
  const en = getI18n("en").t;
  const message =
    body.reason === "expired" ? en("share.gone.expiredAt", { time: new Date(body.expiresAt).toISOString() }) : en(`share.gone.${body.reason}`);
  throw text(status, message, headers);
}

export type OpenShare = Resolved & {
  range: { from: string; to: string };
  fromMs: number;
  toMs: number;
  /** Logs the use as allowed. */
  allow: (status?: number) => Promise<void>;
  /** Logs the use as refused and throws the answer (404 unless told). */
  refuse: (status?: number, body?: ShareRefusal | string) => Promise<never>;
};

/**
 * The gate of every shared route, for GET and HEAD: the token alone decides (a signed-in session
 * plays no part). Unknown: 404. Expired or withdrawn: 410, logged, and nothing of the records.
 */
export async function openShare(request: Request, token: string | undefined, target: ShareTarget, kind: Kind): Promise<OpenShare> {
  const found = await resolveShareToken(token);
  if (!found.ok) {
    if (found.reason === "unknown") refusal(kind, 404, { reason: "unknown" });
    await logShareUse(request, found.share.link.id, target, found.reason, 410);
    refusal(kind, 410, found.reason === "expired" ? { reason: "expired", expiresAt: found.share.link.expiresAt.getTime(), timeZone: found.share.site.timeZone } : { reason: "revoked" });
  }
  const { share } = found;
  const range = { from: share.link.fromDate, to: share.link.toDate };
  const { fromMs, toMs } = rangeInstants(range, share.site.timeZone);
  return {
    ...share,
    range,
    fromMs,
    toMs,
    allow: (status = 200) => logShareUse(request, share.link.id, target, "ok", status),
    refuse: async (status = 404, body: ShareRefusal | string = { reason: "notInScope" }) => {
      await logShareUse(request, share.link.id, target, "refused", status);
      if (typeof body === "string") throw text(status, body);
      return refusal(kind, status, body);
    },
  };
}

/**
 * Any method but GET and HEAD on a shared route: 405, logged as refused (when the token names a
 * link), and nothing else happens. Each shared route's `action` is this.
 */
export async function refuseShareWrite(request: Request, token: string | undefined, target: ShareTarget, kind: Kind): Promise<never> {
  const found = await resolveShareToken(token);
  if (found.ok || found.reason !== "unknown") await logShareUse(request, found.share.link.id, target, "refused", 405);
  return refusal(kind, 405, { reason: "readOnly" }, { Allow: "GET, HEAD" });
}

// ---------------------------------------------------------------------------------------------
// What a link may show: the site's batches that started inside its range.

const inRange = (share: OpenShare) => and(eq(batches.siteId, share.site.id), gte(batches.startedAt, new Date(share.fromMs)), lt(batches.startedAt, new Date(share.toMs)));

export async function isBatchInShare(share: OpenShare, batchId: string) {
  const [row] = await db.select({ id: batches.id }).from(batches).where(and(eq(batches.id, batchId), inRange(share)));
  return !!row;
}

/** A photo is in scope when a reading of a batch in scope carries it. */
export async function isPhotoInShare(share: OpenShare, photoId: string) {
  const [row] = await db
    .select({ id: photos.id })
    .from(photos)
    .innerJoin(readings, eq(readings.photoId, photos.id))
    .innerJoin(batches, eq(batches.id, readings.batchId))
    .where(and(eq(photos.id, photoId), eq(photos.siteId, share.site.id), inRange(share)))
    .limit(1);
  return !!row;
}

/** The plain facts the shared pages' header shows. */
export function shareHeader(share: OpenShare) {
  return {
    organisation: share.organisation,
    site: share.site.name,
    timeZone: share.site.timeZone,
    label: share.link.label,
    from: share.range.from,
    to: share.range.to,
    expiresAt: share.link.expiresAt.getTime(),
  };
}

/**
 * What a shared download covers and who the cover names. No dates: the link's whole period. Dates
 * asked for must lie inside it: a range reaching outside is refused (400, logged), not clamped, so
 * the file never holds less than its name and cover say.
 */
export async function sharedExport(request: Request, share: OpenShare): Promise<{ exporter: Exporter; range: { from: string; to: string }; sheet: ExportSheet | null }> {
  const url = new URL(request.url);
  const from = url.searchParams.get("from");
  const to = url.searchParams.get("to");
  let range = share.range;
  if (from !== null || to !== null) {
    const parsed = ExportRangeSchema.safeParse({ from: from ?? undefined, to: to ?? undefined });
    if (!parsed.success) return share.refuse(400, `Bad date range: ${parsed.error.issues.map((i) => `${i.path.join(".") || "range"}: ${i.message}`).join("; ")}. Use ?from=YYYY-MM-DD&to=YYYY-MM-DD within ${share.range.from} to ${share.range.to}.`);
    if (!withinRange(parsed.data, share.range)) return share.refuse(400, getI18n("en").t("share.gone.outsideRange", share.range));
    range = parsed.data;
  }
  const sheet = SheetSchema.safeParse(url.searchParams.get("sheet") ?? undefined);
  const language = resolveLanguage(readCookie(request, LANGUAGE_COOKIE), null, request.headers.get("accept-language"));
  const label = getI18n(language).t("share.exportedBy", { label: share.link.label, maker: share.madeBy });
  return {
    exporter: { id: share.link.id, name: share.link.label, email: "", language, actor: { kind: "share_link", linkId: share.link.id, label: share.link.label }, label },
    range,
    sheet: sheet.success ? sheet.data : null,
  };
}
