import { eq } from "drizzle-orm";
import { randomUUID } from "node:crypto";
import { data } from "react-router";
import sharp from "sharp";
import { photos } from "~db/schema";
import { recordAudit } from "./audit.server";
import type { Entrant } from "./batches.server";
import { db } from "./db.server";
import { env } from "./env.server";
import { getStationDevice } from "./station.server";
import { getUser, isUuid } from "./guards.server";
import { storageFor, type Storage } from "./storage.server";

export const PHOTO_LIMITS = {
  bytes: 12 * 1024 * 1024,
  // Sharp refuses to decode above this; 40 MP is beyond any phone camera in a kitchen.
  pixels: 40_000_000,
  displayEdge: 1600,
  thumbEdge: 320,
};
// Room for the multipart boundaries and the siteId field around a photo of the full size.
const FORM_OVERHEAD = 64 * 1024;
// Photo formats only: SVG and PDF are documents that sharp would render, not camera pictures.
const ACCEPTED_FORMATS = new Set(["jpeg", "png", "webp", "heif", "tiff", "gif"]);
const NOT_AN_IMAGE = "This file is not a photo we can read: send a JPEG, PNG, WebP, HEIF/AVIF, TIFF or GIF image.";

const refused = (message: string) => data({ errors: { photo: message } }, { status: 400 });
const tooLarge = () => data({ errors: { photo: `The photo is larger than ${PHOTO_LIMITS.bytes / 1024 / 1024} MB.` } }, { status: 413 });

// Past the limit the rest of the body is read and dropped, never kept: cutting the connection while
// the client is still sending would lose the 413 before it is read. Beyond this much, it is cut.
const DISCARD_AT_MOST = 64 * 1024 * 1024;

function discardRest(reader: ReadableStreamDefaultReader<Uint8Array>) {
  void (async () => {
    try {
      for (let dropped = 0; dropped < DISCARD_AT_MOST; ) {
        const { done, value } = await reader.read();
        if (done) return;
        dropped += value.byteLength;
      }
      await reader.cancel();
    } catch {
      // The client has gone: nothing is left to drop.
    }
  })();
}

/** The body, up to `limit` bytes: the declared length is checked first, and the count while reading. */
/** The body, counted as it arrives and refused (413) past `limit` bytes, with or without a length. */
export async function readBody(request: Request, limit: number) {
  const reader = request.body?.getReader();
  if (Number(request.headers.get("content-length")) > limit) {
    if (reader) discardRest(reader);
    throw tooLarge();
  }
  if (!reader) return Buffer.alloc(0);
  const chunks: Uint8Array[] = [];
  let total = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    total += value.byteLength;
    if (total > limit) {
      discardRest(reader);
      throw tooLarge();
    }
    chunks.push(value);
  }
  return Buffer.concat(chunks, total);
}

/** The uploaded bytes and the siteId beside them: a multipart form with `photo`, or the image itself as the body. */
export async function readPhotoUpload(request: Request) {
  const type = request.headers.get("content-type") ?? "";
  const querySiteId = new URL(request.url).searchParams.get("siteId") || undefined;
  if (!/^multipart\/form-data/i.test(type)) {
    const bytes = await readBody(request, PHOTO_LIMITS.bytes);
    if (!bytes.length) throw refused("Send the photo: a multipart form with the field 'photo', or the image itself as the body.");
    return { bytes, fields: { siteId: querySiteId } as Record<string, string | undefined> };
  }
  const body = await readBody(request, PHOTO_LIMITS.bytes + FORM_OVERHEAD);
  let form: FormData;
  try {
    form = await new Response(body, { headers: { "content-type": type } }).formData();
  } catch {
    throw refused("The multipart form could not be read.");
  }
  const file = form.get("photo");
  if (!(file instanceof File) || file.size === 0) throw refused("Attach the photo as the form field 'photo'.");
  if (file.size > PHOTO_LIMITS.bytes) throw tooLarge();
  // The other text fields travel beside the photo (the station sends the entry's attribution and time).
  const fields: Record<string, string | undefined> = { siteId: querySiteId };
  for (const [k, v] of form) if (typeof v === "string") fields[k] = v;
  fields.siteId = fields.siteId || querySiteId;
  return { bytes: Buffer.from(await file.arrayBuffer()), fields };
}

export type ProcessedPhoto = {
  display: { data: Buffer; width: number; height: number };
  thumb: { data: Buffer; width: number; height: number };
};

/**
 * Decodes the upload (by its content, whatever its name or type header said) and re-encodes it as
 * WebP at display and thumbnail size. Orientation is applied first; the output carries no metadata
 * (EXIF, GPS, XMP, ICC) because sharp writes none unless asked.
 */
export async function processPhoto(bytes: Uint8Array): Promise<ProcessedPhoto> {
  // Reading the header alone decodes no pixels, so a bomb is measured before it can go off.
  const meta = await sharp(bytes, { limitInputPixels: false }).metadata().catch(() => null);
  if (!meta || !ACCEPTED_FORMATS.has(meta.format)) throw refused(NOT_AN_IMAGE);
  if (meta.width * meta.height > PHOTO_LIMITS.pixels) {
    throw refused(`This image is ${meta.width} × ${meta.height} pixels; the limit is ${PHOTO_LIMITS.pixels / 1e6} megapixels.`);
  }
  const input = sharp(bytes, { limitInputPixels: PHOTO_LIMITS.pixels }).rotate();
  const variant = (edge: number, quality: number) =>
    input
      .clone()
      .resize({ width: edge, height: edge, fit: "inside", withoutEnlargement: true })
      .webp({ quality })
      .toBuffer({ resolveWithObject: true })
      .then(({ data, info }) => ({ data, width: info.width, height: info.height }));
  try {
    const [display, thumb] = await Promise.all([variant(PHOTO_LIMITS.displayEdge, 80), variant(PHOTO_LIMITS.thumbEdge, 70)]);
    return { display, thumb };
  } catch {
    throw refused("This image is damaged or cut short and could not be read to the end.");
  }
}

let storage: Storage | undefined;
/** Made on first use, so a server that never sees a photo never builds an S3 client. */
export const photoStorage = () => (storage ??= storageFor(env));

/** Stores both sizes, then the record and its audit event in one transaction. */
export async function savePhoto(site: { id: string; organisationId: string }, entrant: Entrant, photo: ProcessedPhoto) {
  const id = randomUUID();
  const storageKey = `${site.id}/${id}.webp`;
  const thumbKey = `${site.id}/${id}-thumb.webp`;
  await Promise.all([
    photoStorage().put(storageKey, photo.display.data, "image/webp"),
    photoStorage().put(thumbKey, photo.thumb.data, "image/webp"),
  ]);
  const { display, thumb } = photo;
  await db.transaction(async (tx) => {
    await tx.insert(photos).values({
      id,
      siteId: site.id,
      storageKey,
      thumbKey,
      width: display.width,
      height: display.height,
      bytes: display.data.byteLength,
      contentType: "image/webp",
      uploadedBy: entrant.userId,
      apiTokenId: entrant.apiTokenId ?? null,
    });
    await recordAudit(tx, {
      actor: entrant.actor,
      organisationId: site.organisationId,
      siteId: site.id,
      action: "photo.uploaded",
      entity: "photo",
      entityId: id,
      data: { width: display.width, height: display.height, bytes: display.data.byteLength },
    });
  });
  return { id, width: display.width, height: display.height, thumbWidth: thumb.width, thumbHeight: thumb.height, bytes: display.data.byteLength };
}

export type PhotoRecord = Pick<typeof photos.$inferSelect, "id" | "siteId" | "storageKey" | "thumbKey" | "contentType">;

export async function findPhoto(id: string | undefined): Promise<PhotoRecord | null> {
  if (!isUuid(id)) return null;
  const [row] = await db
    .select({ id: photos.id, siteId: photos.siteId, storageKey: photos.storageKey, thumbKey: photos.thumbKey, contentType: photos.contentType })
    .from(photos)
    .where(eq(photos.id, id));
  return row ?? null;
}

/**
 * Whether this request may see the photo: a signed-in member of the photo's site, in any role.
 * The one place to widen when another way in (a share link) arrives.
 */
export async function canSeePhoto(request: Request, photo: PhotoRecord) {
  const user = await getUser(request);
  if (user?.memberships.some((m) => m.siteId === photo.siteId)) return true;
  // A station tablet of the same site shows the photos its cooks took.
  const device = await getStationDevice(request);
  return device?.siteId === photo.siteId;
}

/** The stored WebP of one size, or null when the storage has lost it. */
export async function photoResponse(photo: PhotoRecord, size: "display" | "thumb") {
  const bytes = await photoStorage().get(size === "thumb" ? photo.thumbKey : photo.storageKey);
  if (!bytes) return null;
  return new Response(bytes, {
    headers: {
      "Content-Type": photo.contentType,
      "Content-Length": String(bytes.byteLength),
      // Only the signed-in browser may keep it; a shared proxy never should.
      "Cache-Control": "private, max-age=3600",
      "X-Content-Type-Options": "nosniff",
    },
  });
}
