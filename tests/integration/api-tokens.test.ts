import { eq } from "drizzle-orm";
import { describe, expect, it } from "vitest";
import { siteApiTokens } from "~db/schema";
import { Client, signedIn } from "../helpers/client";
import { db, newTenant } from "../helpers/db";

describe("site API tokens", () => {
  it("a manager makes a token that is shown once and stored only as a hash, then revokes it", async () => {
    const { people, site } = await newTenant();
    const manager = await signedIn(people.manager.email, people.manager.password);
    const res = await manager.post(`/sites/${site.id}/api-tokens`, { intent: "create", name: "walk-in gateway" });
    expect(res.status).toBe(200);
    const html = await res.text();
    const token = /data-testid="new-token">(cw_[A-Za-z0-9_-]+)</.exec(html)?.[1];
    expect(token).toMatch(/^cw_[A-Za-z0-9_-]{8}_[A-Za-z0-9_-]{43}$/);
    const [row] = await db.select().from(siteApiTokens).where(eq(siteApiTokens.siteId, site.id));
    // Only the SHA-256 of the token is kept.
    const { createHash } = await import("node:crypto");
    expect(row.tokenHash).toBe(createHash("sha256").update(token!).digest("hex"));
    const list = await (await manager.get(`/sites/${site.id}/api-tokens`)).text();
    expect(list).toContain(`cw_${row.prefix}_…`);
    expect(list).not.toContain(token!);

    expect((await manager.post(`/sites/${site.id}/api-tokens`, { intent: "revoke", tokenId: row.id })).status).toBe(200);
    const [after] = await db.select().from(siteApiTokens).where(eq(siteApiTokens.id, row.id));
    expect(after.revokedAt).not.toBeNull();
    // Revoking twice, or another site's token, is 404.
    expect((await manager.post(`/sites/${site.id}/api-tokens`, { intent: "revoke", tokenId: row.id })).status).toBe(404);
    const other = await newTenant();
    const otherManager = await signedIn(other.people.manager.email, other.people.manager.password);
    expect((await otherManager.post(`/sites/${other.site.id}/api-tokens`, { intent: "revoke", tokenId: row.id })).status).toBe(404);
    // A revoked token is refused by the API.
    const gateway = new Client();
    gateway.origin = null;
    const res2 = await gateway.request("/api/v1/batches?status=active", { headers: { authorization: `Bearer ${token}` } });
    expect(res2.status).toBe(401);
  });

  it("an empty name gets a message and makes no token", async () => {
    const { people, site } = await newTenant();
    const manager = await signedIn(people.manager.email, people.manager.password);
    const res = await manager.post(`/sites/${site.id}/api-tokens`, { intent: "create", name: "  " });
    expect(res.status).toBe(400);
    expect(await res.text()).toContain("Fill this in.");
    expect(await db.select().from(siteApiTokens).where(eq(siteApiTokens.siteId, site.id))).toHaveLength(0);
  });
});
