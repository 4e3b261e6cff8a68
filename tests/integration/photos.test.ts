import { randomBytes } from "node:crypto";
import { and, eq } from "drizzle-orm";
import sharp from "sharp";
import { describe, expect, it } from "vitest";
import { auditEvents, photos } from "~db/schema";
import { Client, signedIn } from "../helpers/client";
import { db, newTenant } from "../helpers/db";
import { cameraJpeg, pixelAt, pngBomb, readExif, textPretendingToBeJpeg, webpChunks } from "../helpers/images";

type Tenant = Awaited<ReturnType<typeof newTenant>>;
type Uploaded = { id: string; width: number; height: number; thumbWidth: number; thumbHeight: number; bytes: number };

const as = (t: Tenant, role: keyof Tenant["people"]) => signedIn(t.people[role].email, t.people[role].password);

function photoForm(photo: Blob | Uint8Array, fields: Record<string, string> = {}) {
  const form = new FormData();
  form.append("photo", photo instanceof Blob ? photo : new File([Buffer.from(photo)], "probe.jpg", { type: "image/jpeg" }));
  for (const [k, v] of Object.entries(fields)) form.append(k, v);
  return form;
}

const photosOf = (siteId: string) => db.select().from(photos).where(eq(photos.siteId, siteId));

async function siteToken(t: Tenant) {
  const manager = await as(t, "manager");
  const html = await (await manager.post(`/sites/${t.site.id}/api-tokens`, { intent: "create", name: "probe gateway" })).text();
  return /data-testid="new-token">(cw_[A-Za-z0-9_-]+)</.exec(html)![1];
}

describe("probe photos", () => {
  it("a cook's camera photo is stored upright as WebP at display size, without EXIF or GPS, and served to the site's members", async () => {
    const t = await newTenant();
    const cook = await as(t, "cook");
    // Held sideways: 2400 × 1800 pixels that the camera says to turn 90° clockwise.
    const original = await cameraJpeg({ width: 2400, height: 1800, orientation: 6 });
    const before = await readExif(original);
    expect(before?.GPSInfo?.GPSLatitude).toEqual([39, 44, 30.12]);
    expect(before?.Image?.Make).toBe("Chillwright Test Camera");

    const res = await cook.request("/api/v1/photos", { body: photoForm(original, { siteId: t.site.id }) });
    expect(res.status).toBe(201);
    const uploaded = (await res.json()) as Uploaded;
    expect(uploaded).toMatchObject({ width: 1200, height: 1600, thumbWidth: 240, thumbHeight: 320 });

    const [row] = await photosOf(t.site.id);
    expect(row).toMatchObject({ id: uploaded.id, width: 1200, height: 1600, bytes: uploaded.bytes, contentType: "image/webp", uploadedBy: t.people.cook.id, apiTokenId: null });
    const [audit] = await db.select().from(auditEvents).where(and(eq(auditEvents.entity, "photo"), eq(auditEvents.entityId, uploaded.id)));
    expect(audit).toMatchObject({ action: "photo.uploaded", actorKind: "user", actorUserId: t.people.cook.id, siteId: t.site.id, organisationId: t.org.id });

    const served = await cook.get(`/photos/${uploaded.id}`);
    expect(served.status).toBe(200);
    expect(served.headers.get("content-type")).toBe("image/webp");
    expect(served.headers.get("cache-control")).toMatch(/^private\b/);
    expect(served.headers.get("x-content-type-options")).toBe("nosniff");
    const webp = new Uint8Array(await served.arrayBuffer());
    expect(webp.byteLength).toBe(uploaded.bytes);
    // Nothing but the picture: no EXIF, XMP or ICC chunk, and sharp reads no EXIF or orientation back.
    expect(webpChunks(webp)).toEqual(["VP8 "]);
    expect(await readExif(webp)).toBeNull();
    const meta = await sharp(webp).metadata();
    expect(meta).toMatchObject({ format: "webp", width: 1200, height: 1600 });
    expect(meta.orientation).toBeUndefined();
    expect(Buffer.from(webp).includes("Chillwright Test Camera")).toBe(false);
    // Turned clockwise, the blue corner that was top left is now top right.
    expect((await pixelAt(webp, 1200 - 20, 20)).b).toBeGreaterThan(200);
    expect((await pixelAt(webp, 20, 20)).b).toBeLessThan(120);

    const thumb = await cook.get(`/photos/${uploaded.id}/thumb`);
    expect(thumb.status).toBe(200);
    expect(thumb.headers.get("content-type")).toBe("image/webp");
    const thumbBytes = new Uint8Array(await thumb.arrayBuffer());
    expect(await sharp(thumbBytes).metadata()).toMatchObject({ width: 240, height: 320 });
    expect(await readExif(thumbBytes)).toBeNull();

    // QA at the same site reads records, photos included.
    expect((await (await as(t, "qa")).get(`/photos/${uploaded.id}`)).status).toBe(200);
  });

  it("another organisation's user and an anonymous visitor get 404 for the photo and its thumbnail, with no redirect", async () => {
    const t = await newTenant();
    const res = await (await as(t, "cook")).request("/api/v1/photos", { body: photoForm(await cameraJpeg()) });
    const { id } = (await res.json()) as Uploaded;
    const stranger = await as(await newTenant(), "admin");
    const anonymous = new Client();
    for (const path of [`/photos/${id}`, `/photos/${id}/thumb`]) {
      for (const client of [stranger, anonymous]) {
        const r = await client.get(path);
        expect(r.status, path).toBe(404);
        expect(r.headers.get("location")).toBeNull();
        expect(r.headers.get("content-type")).not.toBe("image/webp");
      }
    }
    const cook = await as(t, "cook");
    for (const path of ["/photos/not-a-uuid", `/photos/${crypto.randomUUID()}`, `/photos/${id}/original`]) expect((await cook.get(path)).status, path).toBe(404);
  });

  it("a site API token uploads the raw image as the body; the photo is its site's and a token cannot view it", async () => {
    const t = await newTenant();
    const token = await siteToken(t);
    const api = new Client();
    api.origin = null;
    const png = await sharp({ create: { width: 2000, height: 500, channels: 3, background: "#c0392b" } }).png().toBuffer();
    const res = await api.request("/api/v1/photos", { body: png, headers: { authorization: `Bearer ${token}`, "content-type": "application/octet-stream" } });
    expect(res.status).toBe(201);
    const uploaded = (await res.json()) as Uploaded;
    expect(uploaded).toMatchObject({ width: 1600, height: 400, thumbWidth: 320, thumbHeight: 80 });
    const [row] = await photosOf(t.site.id);
    expect(row.uploadedBy).toBeNull();
    expect(row.apiTokenId).not.toBeNull();
    const [audit] = await db.select().from(auditEvents).where(eq(auditEvents.entityId, uploaded.id));
    expect(audit.actorKind).toBe("api_token");

    // The token belongs to one site: naming another organisation's site is 404.
    const other = await newTenant();
    const foreign = await api.request(`/api/v1/photos?siteId=${other.site.id}`, { body: png, headers: { authorization: `Bearer ${token}`, "content-type": "image/png" } });
    expect(foreign.status).toBe(404);
    expect(await photosOf(other.site.id)).toHaveLength(0);
    expect((await api.request(`/photos/${uploaded.id}`, { headers: { authorization: `Bearer ${token}` } })).status).toBe(404);
  });

  it("a text file named .jpg is refused with a clear message, as a form field or as the body, and nothing is stored", async () => {
    const t = await newTenant();
    const cook = await as(t, "cook");
    const res = await cook.request("/api/v1/photos", { body: photoForm(textPretendingToBeJpeg()) });
    expect(res.status).toBe(400);
    const { errors } = (await res.json()) as { errors: Record<string, string> };
    expect(errors.photo).toBe("This file is not a photo we can read: send a JPEG, PNG, WebP, HEIF/AVIF, TIFF or GIF image.");
    const raw = await cook.request("/api/v1/photos", { body: Buffer.from("GIF89a but not really"), headers: { "content-type": "image/jpeg" } });
    expect(raw.status).toBe(400);
    // SVG decodes, but it is a document, not a camera picture.
    const svg = Buffer.from('<svg xmlns="http://www.w3.org/2000/svg" width="100" height="100"><rect width="100" height="100"/></svg>');
    expect((await cook.request("/api/v1/photos", { body: photoForm(new File([svg], "probe.jpg", { type: "image/jpeg" })) })).status).toBe(400);
    // A JPEG cut short is refused too.
    const jpeg = await cameraJpeg({ width: 1200, height: 900, noise: true });
    const cut = await cook.request("/api/v1/photos", { body: jpeg.subarray(0, jpeg.length / 2), headers: { "content-type": "image/jpeg" } });
    expect(cut.status).toBe(400);
    expect(((await cut.json()) as { errors: Record<string, string> }).errors.photo).toMatch(/damaged or cut short/);
    expect(await photosOf(t.site.id)).toHaveLength(0);
  });

  it("a body over 12 MB is refused with 413: by its declared length, by counting a stream that declares none, and as a form file", async () => {
    const t = await newTenant();
    const cook = await as(t, "cook");
    const big = randomBytes(13 * 1024 * 1024);
    const declared = await cook.request("/api/v1/photos", { body: big, headers: { "content-type": "image/jpeg" } });
    expect(declared.status).toBe(413);
    expect(((await declared.json()) as { errors: Record<string, string> }).errors.photo).toBe("The photo is larger than 12 MB.");

    let sent = 0;
    const stream = new ReadableStream<Uint8Array>({
      pull(controller) {
        if (sent >= big.length) return controller.close();
        controller.enqueue(big.subarray(sent, sent + 256 * 1024));
        sent += 256 * 1024;
      },
    });
    const counted = await cook.request("/api/v1/photos", { body: stream, headers: { "content-type": "image/jpeg" } });
    expect(counted.status).toBe(413);

    const form = await cook.request("/api/v1/photos", { body: photoForm(big) });
    expect(form.status).toBe(413);
    expect(await photosOf(t.site.id)).toHaveLength(0);
  });

  it("a decompression bomb, a few kilobytes declaring 64 or 2500 megapixels, is refused before it is decoded", async () => {
    const t = await newTenant();
    const cook = await as(t, "cook");
    const valid = await cook.request("/api/v1/photos", { body: photoForm(new File([pngBomb(8000, 8000, true)], "probe.png")) });
    expect(valid.status).toBe(400);
    expect(((await valid.json()) as { errors: Record<string, string> }).errors.photo).toBe("This image is 8000 × 8000 pixels; the limit is 40 megapixels.");
    const huge = await cook.request("/api/v1/photos", { body: pngBomb(50_000, 50_000, false), headers: { "content-type": "image/png" } });
    expect(huge.status).toBe(400);
    expect(((await huge.json()) as { errors: Record<string, string> }).errors.photo).toMatch(/50000 × 50000 pixels/);
    expect(await photosOf(t.site.id)).toHaveLength(0);
  });

  it("only callers who make entries at the site may upload; bad fields get a message each", async () => {
    const t = await newTenant();
    const jpeg = await cameraJpeg({ width: 320, height: 240 });
    expect((await new Client().request("/api/v1/photos", { body: photoForm(jpeg) })).status).toBe(401);
    expect((await (await as(t, "qa")).request("/api/v1/photos", { body: photoForm(jpeg) })).status).toBe(403);
    const stranger = await as(await newTenant(), "cook");
    expect((await stranger.request("/api/v1/photos", { body: photoForm(jpeg, { siteId: t.site.id }) })).status).toBe(404);

    const cook = await as(t, "cook");
    const noPhoto = new FormData();
    noPhoto.append("siteId", t.site.id);
    const missing = await cook.request("/api/v1/photos", { body: noPhoto });
    expect(missing.status).toBe(400);
    expect(((await missing.json()) as { errors: Record<string, string> }).errors.photo).toBe("Attach the photo as the form field 'photo'.");
    const badSite = await cook.request("/api/v1/photos", { body: photoForm(jpeg, { siteId: "kitchen" }) });
    expect(badSite.status).toBe(400);
    expect(((await badSite.json()) as { errors: Record<string, string> }).errors.siteId).toBe("siteId must be the id of a site");
    expect((await cook.request("/api/v1/photos", { body: new Uint8Array(0), headers: { "content-type": "image/jpeg" } })).status).toBe(400);
    expect((await cook.get("/api/v1/photos")).status).toBe(405);
    expect(await photosOf(t.site.id)).toHaveLength(0);
  });
});
