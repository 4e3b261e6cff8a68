import { and, desc, eq, isNull, lt, or, sql } from "drizzle-orm";
import { data } from "react-router";
import { sites, siteApiTokens } from "~db/schema";
import { recordAudit } from "./audit.server";
import { hashToken, makeToken } from "./crypto.server";
import { db } from "./db.server";
import { getUser, type SessionUser } from "./guards.server";

// Tokens read "cw_" + an 8-character prefix that is shown in lists + "_" + 256 random bits.
export async function createApiToken(user: SessionUser, site: { id: string; organisationId: string }, name: string) {
  const prefix = makeToken(6).slice(0, 8);
  const token = `cw_${prefix}_${makeToken()}`;
  await db.transaction(async (tx) => {
    const [row] = await tx
      .insert(siteApiTokens)
      .values({ siteId: site.id, name, prefix, tokenHash: hashToken(token), createdBy: user.id })
      .returning({ id: siteApiTokens.id });
    await recordAudit(tx, {
      actor: { kind: "user", userId: user.id },
      organisationId: site.organisationId,
      siteId: site.id,
      action: "api_token.created",
      entity: "site_api_token",
      entityId: row.id,
      data: { name, prefix },
    });
  });
  return token;
}

export function listApiTokens(siteId: string) {
  return db
    .select({ id: siteApiTokens.id, name: siteApiTokens.name, prefix: siteApiTokens.prefix, lastUsedAt: siteApiTokens.lastUsedAt, createdAt: siteApiTokens.createdAt })
    .from(siteApiTokens)
    .where(and(eq(siteApiTokens.siteId, siteId), isNull(siteApiTokens.revokedAt)))
    .orderBy(desc(siteApiTokens.createdAt));
}

export async function revokeApiToken(user: SessionUser, site: { id: string; organisationId: string }, tokenId: string) {
  return db.transaction(async (tx) => {
    const [row] = await tx
      .update(siteApiTokens)
      .set({ revokedAt: new Date() })
      .where(and(eq(siteApiTokens.id, tokenId), eq(siteApiTokens.siteId, site.id), isNull(siteApiTokens.revokedAt)))
      .returning({ id: siteApiTokens.id });
    if (row) {
      await recordAudit(tx, {
        actor: { kind: "user", userId: user.id },
        organisationId: site.organisationId,
        siteId: site.id,
        action: "api_token.revoked",
        entity: "site_api_token",
        entityId: row.id,
      });
    }
    return !!row;
  });
}

export type ApiCaller =
  | { kind: "user"; user: SessionUser; organisationId: string; siteIds: string[] }
  | { kind: "api_token"; tokenId: string; organisationId: string; siteIds: string[] };

const jsonError = (status: number, message: string) => data({ error: message }, { status });

// Asked on every API request: built once, prepared once per connection.
const tokenStatement = db
  .select({ id: siteApiTokens.id, siteId: siteApiTokens.siteId, organisationId: sites.organisationId })
  .from(siteApiTokens)
  .innerJoin(sites, eq(sites.id, siteApiTokens.siteId))
  .where(and(eq(siteApiTokens.tokenHash, sql.placeholder("hash")), isNull(siteApiTokens.revokedAt)))
  .prepare("cw_api_token");

// When this process last wrote each token's last use (ms).
const lastUseWritten = new Map<string, number>();

/**
 * Who is calling an API route: a signed-in user (session cookie) or a site API token
 * (`Authorization: Bearer cw_…`). Anyone else gets a JSON 401.
 */
export async function requireApiCaller(request: Request): Promise<ApiCaller> {
  const auth = request.headers.get("authorization");
  if (auth) {
    const token = /^Bearer\s+(cw_[A-Za-z0-9_-]+)$/.exec(auth)?.[1];
    if (!token) throw jsonError(401, "The Authorization header must be 'Bearer cw_…' with a site API token.");
    const [row] = await tokenStatement.execute({ hash: hashToken(token) });
    if (!row) throw jsonError(401, "This API token is not valid (unknown or revoked).");
    // To the minute: every tablet of a site shares its token, and a write per request would queue them
    // all on one row. A process that wrote it less than a minute ago does not even ask.
    const now = Date.now();
    const written = lastUseWritten.get(row.id);
    if (written === undefined || now - written >= 60_000) {
      lastUseWritten.set(row.id, now);
      if (lastUseWritten.size > 10_000) lastUseWritten.clear();
      await db
        .update(siteApiTokens)
        .set({ lastUsedAt: new Date(now) })
        .where(and(eq(siteApiTokens.id, row.id), or(isNull(siteApiTokens.lastUsedAt), lt(siteApiTokens.lastUsedAt, sql`now() - interval '1 minute'`))));
    }
    return { kind: "api_token", tokenId: row.id, organisationId: row.organisationId, siteIds: [row.siteId] };
  }
  const user = await getUser(request);
  if (!user) throw jsonError(401, "Sign in, or send a site API token as 'Authorization: Bearer cw_…'.");
  return { kind: "user", user, organisationId: user.organisationId, siteIds: user.memberships.map((m) => m.siteId) };
}
