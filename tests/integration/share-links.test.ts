import { createHash } from "node:crypto";
import { and, asc, count, eq, inArray, ne } from "drizzle-orm";
import ExcelJS from "exceljs";
import { beforeAll, describe, expect, it } from "vitest";
import { auditEvents, batches, correctiveActions, readings, shareLinks, shareLinkUses, verifications } from "~db/schema";
import { localDateOf } from "~/lib/records-export";
import { Client, signedIn } from "../helpers/client";
import { db, newTenant } from "../helpers/db";
import { linkIn, waitForMail } from "../helpers/maildev";
import { makeShareLink, sharedKitchen, uploadPhoto } from "../helpers/share";

type Kitchen = Awaited<ReturnType<typeof sharedKitchen>>;
const sha256 = (s: string) => createHash("sha256").update(s).digest("hex");

const usesOf = async (token: string) => {
  const [link] = await db.select({ id: shareLinks.id }).from(shareLinks).where(eq(shareLinks.tokenHash, sha256(token)));
  return db.select().from(shareLinkUses).where(eq(shareLinkUses.linkId, link.id)).orderBy(asc(shareLinkUses.at));
};

// What a write through a link could touch: none of these counts may move.
async function recordCounts(siteId: string) {
  const [b] = await db.select({ n: count() }).from(batches).where(eq(batches.siteId, siteId));
  const [r] = await db.select({ n: count() }).from(readings).where(eq(readings.siteId, siteId));
  const [a] = await db.select({ n: count() }).from(correctiveActions).where(eq(correctiveActions.siteId, siteId));
  const [v] = await db.select({ n: count() }).from(verifications).where(eq(verifications.siteId, siteId));
  return { batches: b.n, readings: r.n, actions: a.n, verifications: v.n };
}

describe("share links", () => {
  let k: Kitchen;
  let qa: Client;
  let token: string;
  let other: Awaited<ReturnType<typeof newTenant>>;
  let otherBatchId: string;
  let otherPhotoId: string;
  const label = "County inspection, spring";
  const stranger = new Client();

  beforeAll(async () => {
    k = await sharedKitchen();
    qa = await signedIn(k.t.people.qa.email, k.t.people.qa.password);
    const made = await makeShareLink(k.t, qa, { label, fromDate: k.range.from, toDate: k.range.to });
    expect(made.status).toBe(200);
    token = made.token!;
    other = await newTenant();
    const otherCook = await signedIn(other.people.cook.email, other.people.cook.password);
    otherPhotoId = await uploadPhoto(otherCook);
    const [ob] = await db
      .insert(batches)
      .values({ siteId: other.site.id, clientId: `o-${Date.now()}`, productId: other.product.id, lotCode: "OTHER-1", ruleSetCode: other.site.ruleSetCode, panSize: "gn-1/1", panDepthMm: 65, fillDepthMm: 50, method: "walk-in", startedAt: new Date(), state: "cooled", endedAt: new Date() })
      .returning();
    otherBatchId = ob.id;
  });

  describe("making one", () => {
    it("a cook may not make a link (403); a manager of another organisation's site gets 404; QA may", async () => {
      const cook = await signedIn(k.t.people.cook.email, k.t.people.cook.password);
      expect((await makeShareLink(k.t, cook, { label: "x", fromDate: k.range.from, toDate: k.range.to })).status).toBe(403);
      const foreign = await signedIn(other.people.manager.email, other.people.manager.password);
      expect((await makeShareLink(k.t, foreign, { label: "x", fromDate: k.range.from, toDate: k.range.to })).status).toBe(404);
      expect((await cook.get(`/sites/${k.t.site.id}/sharing`)).status).toBe(403);
      expect((await foreign.get(`/sites/${k.t.site.id}/sharing`)).status).toBe(404);
      expect(token).toMatch(/^[A-Za-z0-9_-]{43}$/);
    });

    it("stores only the SHA-256 of a token of 256 random bits, and audits the creation", async () => {
      const bytes = Buffer.from(token, "base64url");
      expect(bytes.length * 8).toBeGreaterThanOrEqual(128);
      expect(bytes.length).toBe(32);
      const [row] = await db.select().from(shareLinks).where(eq(shareLinks.tokenHash, sha256(token)));
      expect(row).toMatchObject({ siteId: k.t.site.id, organisationId: k.t.org.id, label, fromDate: k.range.from, toDate: k.range.to, createdBy: k.t.people.qa.id, revokedAt: null });
      expect(JSON.stringify(row)).not.toContain(token);
      expect(row.expiresAt.getTime() - Date.now()).toBeGreaterThan(6.9 * 86_400_000);
      const [audit] = await db.select().from(auditEvents).where(and(eq(auditEvents.action, "share_link.created"), eq(auditEvents.entityId, row.id)));
      expect(audit).toMatchObject({ actorKind: "user", actorUserId: k.t.people.qa.id, siteId: k.t.site.id });
      expect(JSON.stringify(audit.data)).not.toContain(token);
    });

    it("refuses bad input field by field and stores nothing", async () => {
      const before = (await db.select({ n: count() }).from(shareLinks).where(eq(shareLinks.siteId, k.t.site.id)))[0].n;
      const cases: [Record<string, string>, string, string][] = [
        [{ label: "x", fromDate: k.range.to, toDate: "2020-01-01" }, "toDate", "The last day must not be before the first"],
        [{ label: "x", fromDate: "2023-01-01", toDate: "2024-06-01" }, "toDate", "A link covers at most a year of records"],
        [{ label: "x", fromDate: k.range.from, toDate: k.range.to, expiry: "at", expiresAt: "2020-01-01T10:00" }, "expiresAt", "That time has already passed"],
        [{ label: "x", fromDate: k.range.from, toDate: k.range.to, expiresInDays: "91" }, "expiresInDays", "Give a whole number of days from 1 to 90"],
        [{ label: "x", fromDate: k.range.from, toDate: k.range.to, email: "not-an-address" }, "email", "That is not an e-mail address"],
        [{ label: "", fromDate: k.range.from, toDate: k.range.to }, "label", "Fill this in."],
      ];
      for (const [form, field, message] of cases) {
        const res = await makeShareLink(k.t, qa, form);
        expect(res.status, field).toBe(400);
        expect(res.token).toBeNull();
        expect(res.html).toContain(`id="f-${field}-error"`);
        expect(res.html).toContain(message);
      }
      const after = (await db.select({ n: count() }).from(shareLinks).where(eq(shareLinks.siteId, k.t.site.id)))[0].n;
      expect(after).toBe(before);
    });

    it("the sharing screen lists the link with its range, maker and uses, never the token", async () => {
      await stranger.get(`/shared/${token}`);
      const html = await (await qa.get(`/sites/${k.t.site.id}/sharing`)).text();
      expect(html).toContain(label);
      expect(html).toContain(`${k.range.from} to ${k.range.to}`);
      expect(html).toContain(`qa ${k.t.org.slug.slice(7)}`);
      expect(html).not.toContain(token);
      expect(html).toMatch(/data-testid="share-uses">[1-9]/);
    });
  });

  describe("opening it", () => {
    it("shows the period's records to anyone holding the link, with no-store, no-referrer and noindex", async () => {
      const res = await stranger.get(`/shared/${token}`);
      expect(res.status).toBe(200);
      expect(res.headers.get("cache-control")).toBe("no-store");
      expect(res.headers.get("referrer-policy")).toBe("no-referrer");
      expect(res.headers.get("x-robots-tag")).toMatch(/noindex/);
      // The document keeps the nonce-based policy: the router's inline scripts carry the nonce.
      const csp = res.headers.get("content-security-policy") ?? "";
      const nonce = /'nonce-([^']+)'/.exec(csp)?.[1];
      expect(nonce).toBeTruthy();
      const html = await res.text();
      expect(html).toContain(`nonce="${nonce}"`);
      expect(html).toContain(k.batch.lot);
      expect(html).toContain(k.t.product.name);
      expect(html).not.toContain(k.old.lot);
      expect(html).toContain(`/shared/${token}/batches/${k.batch.id}`);
      expect(html).toContain("Read-only");
      expect(html).toContain("The probe reading is the record");
      expect(html).toContain(k.t.site.name);
      expect(html).toContain(label);
    });

    it("ignores a signed-in session: another organisation's user sees the same, and a session does not open an unknown link", async () => {
      const foreign = await signedIn(other.people.qa.email, other.people.qa.password);
      const res = await foreign.get(`/shared/${token}`);
      expect(res.status).toBe(200);
      expect(await res.text()).toContain(k.batch.lot);
      const wrong = await qa.get(`/shared/${"A".repeat(43)}`);
      expect(wrong.status).toBe(404);
      const body = await wrong.text();
      expect(body).toContain("This link is not valid");
      expect(body).not.toContain(k.t.product.name);
      expect(wrong.headers.get("cache-control")).toBe("no-store");
      expect((await stranger.get("/shared/short")).status).toBe(404);
    });

    it("opens a batch of the range with its curve and its photo through the share's photo route, and no forms", async () => {
      const res = await stranger.get(`/shared/${token}/batches/${k.batch.id}`);
      expect(res.status).toBe(200);
      const html = await res.text();
      expect(html).toContain(k.batch.lot);
      expect(html).toContain('aria-labelledby="curve"');
      expect(html).toContain(`/shared/${token}/photos/${k.batch.photoId}/thumb`);
      expect(html).not.toContain(`"/photos/${k.batch.photoId}`);
      expect(html).not.toMatch(/<form[^>]*method="post"[^>]*action="\/shared/);
      expect(html).not.toContain('name="intent"');
      const photo = await stranger.get(`/shared/${token}/photos/${k.batch.photoId}`);
      expect(photo.status).toBe(200);
      expect(photo.headers.get("content-type")).toBe("image/webp");
      expect(photo.headers.get("cache-control")).toBe("no-store");
      expect((await photo.arrayBuffer()).byteLength).toBeGreaterThan(50);
      expect((await stranger.get(`/shared/${token}/photos/${k.batch.photoId}/thumb`)).status).toBe(200);
    });

    it("downloads the workbook and the CSV of the period; the cover names the share link", async () => {
      const xlsx = await stranger.get(`/shared/${token}/export.xlsx`);
      expect(xlsx.status).toBe(200);
      expect(xlsx.headers.get("cache-control")).toBe("no-store");
      expect(xlsx.headers.get("content-disposition")).toContain(`${k.range.from}-to-${k.range.to}.xlsx`);
      const wb = new ExcelJS.Workbook();
      await wb.xlsx.load(await xlsx.arrayBuffer());
      const cover = new Map<unknown, unknown>();
      wb.getWorksheet("Cover")!.eachRow((row) => cover.set(row.getCell(1).value, row.getCell(2).value));
      expect(cover.get("Exported by")).toBe(`Share link “${label}” (made by qa ${k.t.org.slug.slice(7)})`);
      const lots: unknown[] = [];
      wb.getWorksheet("Batches")!.eachRow((row) => lots.push(row.getCell(1).value));
      expect(lots).toContain(k.batch.lot);
      expect(lots).not.toContain(k.old.lot);
      // A part of the range: the day the batch started, on the site's clock (it may be yesterday just after midnight).
      const day = localDateOf(k.batch.startedAt, k.t.site.timeZone);
      const csv = await stranger.get(`/shared/${token}/export.csv?sheet=readings&from=${day}&to=${day}`);
      expect(csv.status).toBe(200);
      expect(await csv.text()).toContain(k.batch.lot);
      // The sweep's weekly e-mail of last week (the kitchen has a batch there) is an export too, the system's.
      const [audit] = await db
        .select()
        .from(auditEvents)
        .where(and(eq(auditEvents.siteId, k.t.site.id), eq(auditEvents.action, "records.exported"), ne(auditEvents.actorKind, "system")))
        .orderBy(asc(auditEvents.id));
      expect(audit).toMatchObject({ actorKind: "share_link", actorUserId: null, actorLabel: label });
    });

    it("the records view and the print view stay inside the link's dates: a wider range is left out with a note", async () => {
      const before = new Date(Date.parse(`${k.range.from}T12:00:00Z`) - 30 * 86_400_000).toISOString().slice(0, 10);
      const wide = await (await stranger.get(`/shared/${token}?from=${before}&to=${k.range.to}`)).text();
      expect(wide).toContain("Some of the address could not be used and was left out: the dates.");
      expect(wide).not.toContain(k.old.lot);
      expect(wide).toContain(k.batch.lot);
      // No filter by person: the staff list is not the inspector's.
      expect(wide).not.toContain('name="cook"');
      const print = await stranger.get(`/shared/${token}/print?from=${before}&to=${k.range.to}`);
      expect(print.status).toBe(200);
      expect(print.headers.get("cache-control")).toBe("no-store");
      const paper = await print.text();
      expect(paper).toContain(k.batch.lot);
      expect(paper).not.toContain(k.old.lot);
      expect(paper).toContain("The probe reading is the record");
      const uses = await usesOf(token);
      expect(uses.some((u) => u.target === "print" && u.outcome === "ok")).toBe(true);
    });

    it("refuses a requested range that reaches outside the link's (400, with a message)", async () => {
      const before = new Date(Date.parse(`${k.range.from}T12:00:00Z`) - 3 * 86_400_000).toISOString().slice(0, 10);
      const res = await stranger.get(`/shared/${token}/export.xlsx?from=${before}&to=${k.range.to}`);
      expect(res.status).toBe(400);
      expect(await res.text()).toContain(`outside the shared period (${k.range.from} to ${k.range.to})`);
      expect((await stranger.get(`/shared/${token}/export.csv?sheet=batches&from=${k.range.from}&to=2099-01-01`)).status).toBe(400);
      expect((await stranger.get(`/shared/${token}/export.csv?sheet=nonsense`)).status).toBe(400);
    });

    it("answers 404 for a batch of another site, a batch outside the range and photos out of scope", async () => {
      for (const path of [`batches/${otherBatchId}`, `batches/${k.old.id}`, "batches/not-a-uuid", `photos/${otherPhotoId}`, `photos/${k.old.photoId}`, `photos/${k.old.photoId}/thumb`]) {
        const res = await stranger.get(`/shared/${token}/${path}`);
        expect(res.status, path).toBe(404);
        const body = await res.text();
        expect(body, path).not.toContain(k.old.lot);
        expect(body, path).not.toContain("OTHER-1");
      }
    });
  });

  describe("writing through it", () => {
    it("answers every POST, PUT and DELETE on every shared route with 405 and changes nothing", async () => {
      const before = await recordCounts(k.t.site.id);
      const paths = ["", "/print", `/batches/${k.batch.id}`, `/photos/${k.batch.photoId}`, `/photos/${k.batch.photoId}/thumb`, "/export.xlsx", "/export.csv?sheet=readings"];
      const usesBefore = (await usesOf(token)).length;
      for (const path of paths) {
        for (const method of ["POST", "PUT", "DELETE"]) {
          const res = await stranger.request(`/shared/${token}${path}`, { method, form: { intent: "sign", agree: "true", value: "40", unit: "F" } });
          expect(res.status, `${method} ${path}`).toBe(405);
          expect(res.headers.get("allow"), `${method} ${path}`).toBe("GET, HEAD");
          expect(await res.text(), `${method} ${path}`).toContain("read-only");
        }
      }
      expect(await recordCounts(k.t.site.id)).toEqual(before);
      const uses = (await usesOf(token)).slice(usesBefore);
      // One use per request, each refused: the page's loader does not run after the refused action.
      expect(uses).toHaveLength(paths.length * 3);
      expect(uses.every((u) => u.outcome === "refused" && u.status === 405)).toBe(true);
      expect(new Set(uses.map((u) => u.method))).toEqual(new Set(["POST", "PUT", "DELETE"]));
    });

    it("a write from another origin is refused before it reaches the link (the router's 400 on pages, the middleware's 403 on files)", async () => {
      const usesBefore = (await usesOf(token)).length;
      const page = await stranger.request(`/shared/${token}`, { method: "POST", form: { x: "1" }, headers: { origin: "https://elsewhere.example" } });
      expect(page.status).toBe(400);
      const file = await stranger.request(`/shared/${token}/export.xlsx`, { method: "POST", form: { x: "1" }, headers: { origin: "https://elsewhere.example" } });
      expect(file.status).toBe(403);
      expect(file.headers.get("cache-control")).toBe("no-store");
      expect(await usesOf(token)).toHaveLength(usesBefore);
    });
  });

  describe("the log of uses", () => {
    it("records every use with its method, target, outcome, status, address and user agent, and never the token", async () => {
      const own = await makeShareLink(k.t, qa, { label: "Log check", fromDate: k.range.from, toDate: k.range.to });
      const t2 = own.token!;
      const visitor = new Client();
      await visitor.request(`/shared/${t2}`, { headers: { "user-agent": "InspectorTablet/1.0" } });
      await visitor.get(`/shared/${t2}/batches/${k.old.id}`);
      await visitor.request(`/shared/${t2}/batches/${k.batch.id}`, { method: "DELETE" });
      await visitor.get(`/shared/${t2}/export.csv?sheet=batches`);
      const head = await visitor.request(`/shared/${t2}`, { method: "HEAD" });
      expect(head.status).toBe(200);
      expect(head.headers.get("cache-control")).toBe("no-store");
      const uses = await usesOf(t2);
      expect(uses.map((u) => [u.method, u.target, u.outcome, u.status])).toEqual([
        ["GET", "records", "ok", 200],
        ["GET", "batch", "refused", 404],
        ["DELETE", "batch", "refused", 405],
        ["GET", "export-csv", "ok", 200],
        ["HEAD", "records", "ok", 200],
      ]);
      expect(uses[0].userAgent).toBe("InspectorTablet/1.0");
      expect(uses.every((u) => u.address === visitor.address)).toBe(true);
      expect(uses.map((u) => u.path)).toEqual(["/shared/…", `/shared/…/batches/${k.old.id}`, `/shared/…/batches/${k.batch.id}`, "/shared/…/export.csv?sheet=batches", "/shared/…"]);
      expect(JSON.stringify(uses)).not.toContain(t2);
      // QA sees them on the sharing screen.
      const html = await (await qa.get(`/sites/${k.t.site.id}/sharing`)).text();
      expect(html).toContain("Uses of “Log check” (5)");
      expect(html).toContain(visitor.address);
      expect(html).toContain("refused");
    });

    it("the log is append-only: the database refuses to change or delete a use", async () => {
      const [use] = await usesOf(token);
      await expect(db.update(shareLinkUses).set({ outcome: "ok" }).where(eq(shareLinkUses.id, use.id))).rejects.toThrow();
      await expect(db.delete(shareLinkUses).where(eq(shareLinkUses.id, use.id))).rejects.toThrow();
    });
  });

  describe("when it ends", () => {
    it("an expired link answers 410 on every route, says when it expired and shows no record", async () => {
      const own = await makeShareLink(k.t, qa, { label: "Short one", fromDate: k.range.from, toDate: k.range.to });
      expect((await stranger.get(`/shared/${own.token}`)).status).toBe(200);
      await db.update(shareLinks).set({ expiresAt: new Date(Date.now() - 60_000) }).where(eq(shareLinks.tokenHash, sha256(own.token!)));
      const page = await stranger.get(`/shared/${own.token}`);
      expect(page.status).toBe(410);
      const html = await page.text();
      expect(html).toContain("This link has expired");
      expect(html).toContain("This link expired on");
      expect(html).not.toContain(k.t.product.name);
      expect(html).not.toContain(k.batch.lot);
      expect(html).not.toContain(k.t.site.name);
      for (const path of ["/print", `/batches/${k.batch.id}`, `/photos/${k.batch.photoId}`, "/export.xlsx", "/export.csv?sheet=readings"]) {
        const res = await stranger.get(`/shared/${own.token}${path}`);
        expect(res.status, path).toBe(410);
        const body = await res.text();
        expect(body, path).toMatch(/expired/);
        expect(body, path).not.toContain(k.batch.lot);
      }
      const uses = await usesOf(own.token!);
      expect(uses.slice(1).map((u) => [u.outcome, u.status])).toEqual(Array(6).fill(["expired", 410]));
    });

    it("a revoked link answers 410 and says it was withdrawn; only QA or a manager of the site may revoke, with an audit event", async () => {
      const own = await makeShareLink(k.t, qa, { label: "To withdraw", fromDate: k.range.from, toDate: k.range.to });
      const [row] = await db.select().from(shareLinks).where(eq(shareLinks.tokenHash, sha256(own.token!)));
      const cook = await signedIn(k.t.people.cook.email, k.t.people.cook.password);
      expect((await cook.post(`/sites/${k.t.site.id}/sharing`, { intent: "revoke", linkId: row.id })).status).toBe(403);
      const foreignManager = await signedIn(other.people.manager.email, other.people.manager.password);
      expect((await foreignManager.post(`/sites/${other.site.id}/sharing`, { intent: "revoke", linkId: row.id })).status).toBe(404);
      expect((await stranger.get(`/shared/${own.token}`)).status).toBe(200);

      const manager = await signedIn(k.t.people.manager.email, k.t.people.manager.password);
      const res = await manager.post(`/sites/${k.t.site.id}/sharing`, { intent: "revoke", linkId: row.id });
      expect(res.status).toBe(200);
      expect(await res.text()).toContain("The link is withdrawn");
      const [after] = await db.select().from(shareLinks).where(eq(shareLinks.id, row.id));
      expect(after.revokedBy).toBe(k.t.people.manager.id);
      const [audit] = await db.select().from(auditEvents).where(and(eq(auditEvents.action, "share_link.revoked"), eq(auditEvents.entityId, row.id)));
      expect(audit).toMatchObject({ actorKind: "user", actorUserId: k.t.people.manager.id });
      // A second revoke finds no active link.
      expect((await manager.post(`/sites/${k.t.site.id}/sharing`, { intent: "revoke", linkId: row.id })).status).toBe(404);

      const page = await stranger.get(`/shared/${own.token}`);
      expect(page.status).toBe(410);
      const html = await page.text();
      expect(html).toContain("This link was withdrawn");
      expect(html).not.toContain(k.t.product.name);
      expect(html).not.toContain(k.batch.lot);
      for (const path of ["/print", `/batches/${k.batch.id}`, `/photos/${k.batch.photoId}/thumb`, "/export.xlsx"]) {
        const r = await stranger.get(`/shared/${own.token}${path}`);
        expect(r.status, path).toBe(410);
        expect(await r.text(), path).not.toContain(k.batch.lot);
      }
      const uses = await usesOf(own.token!);
      expect(uses.map((u) => u.outcome)).toEqual(["ok", "revoked", "revoked", "revoked", "revoked", "revoked"]);
      const listed = await (await qa.get(`/sites/${k.t.site.id}/sharing`)).text();
      expect(listed).toMatch(/To withdraw[\s\S]*?withdrawn/);
    });
  });

  it("e-mails the link: the mail names the site, the range, the expiry, the sender and the caution, and its link works", async () => {
    const to = `inspector-${k.t.org.slug}@county.example`;
    const since = Date.now();
    const made = await makeShareLink(k.t, qa, { label: "By mail", fromDate: k.range.from, toDate: k.range.to, email: to });
    expect(made.status).toBe(200);
    expect(made.html).toContain(`The link was sent to ${to}`);
    const mail = await waitForMail(to, { after: since });
    expect(mail.subject).toContain(k.t.site.name);
    expect(mail.text).toContain(`${k.range.from} to ${k.range.to}`);
    expect(mail.text).toContain("The link works until");
    expect(mail.text).toContain(`qa ${k.t.org.slug.slice(7)} <${k.t.people.qa.email}>`);
    expect(mail.text).toContain("The probe reading is the record");
    const path = linkIn(mail, "/shared/");
    expect(path).toBe(`/shared/${made.token}`);
    const res = await new Client().get(path);
    expect(res.status).toBe(200);
    expect(await res.text()).toContain(k.batch.lot);
    const [row] = await db.select({ id: shareLinks.id }).from(shareLinks).where(eq(shareLinks.tokenHash, sha256(made.token!)));
    const mailed = await db.select().from(auditEvents).where(and(eq(auditEvents.action, "share_link.emailed"), inArray(auditEvents.entityId, [row.id])));
    expect(mailed).toHaveLength(1);
  });
});
