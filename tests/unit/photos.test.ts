import { CreateBucketCommand, HeadObjectCommand, S3Client } from "@aws-sdk/client-s3";
import { mkdtemp, readdir, readFile, rm, writeFile } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
// @ts-expect-error s3rver ships no type declarations
import S3rverModule from "s3rver";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { assertStorageKey, folderStorage, s3Storage, storageFor } from "~/server/storage.server";
import { cameraJpeg, pngBomb, readExif, webpChunks } from "../helpers/images";

type S3rverOptions = { address: string; port: number; directory: string; silent: boolean };
const S3rver = S3rverModule as new (options: S3rverOptions) => { run(): Promise<{ port: number }>; close(): Promise<void> };

const bytes = (s: string) => new Uint8Array(Buffer.from(s));
const text = (b: Uint8Array | null) => (b ? Buffer.from(b).toString() : null);

describe("storage keys", () => {
  it("a key is segments of letters, digits, dashes and underscores with one extension", () => {
    for (const key of ["site/photo.webp", "5b1c/8e2f-thumb.webp", "a", "a_b/c-d/e.webp"]) expect(assertStorageKey(key)).toBe(key);
  });

  it("a key that could leave the folder, or that names a hidden or odd file, is refused", () => {
    for (const key of ["../x.webp", "a/../../b", "/etc/passwd", "a//b", "a\\b", "", ".hidden", "a/.b", "a/b.", "a/b.webp/", "C:/x", "a%2f..", "a\nb", "a".repeat(513)]) {
      expect(() => assertStorageKey(key), key).toThrow(/Invalid storage key/);
    }
  });
});

describe("folder storage", () => {
  let dir: string;
  beforeAll(async () => {
    dir = await mkdtemp(join(tmpdir(), "chillwright-photos-"));
  });
  afterAll(() => rm(dir, { recursive: true, force: true }));

  it("stores bytes under their key, making the folders, and reads them back", async () => {
    const storage = folderStorage(join(dir, "nested", "photos"));
    await storage.put("site-1/photo.webp", bytes("first"), "image/webp");
    expect(text(await storage.get("site-1/photo.webp"))).toBe("first");
    expect(await readdir(join(dir, "nested", "photos", "site-1"))).toEqual(["photo.webp"]);
  });

  it("a missing key reads as null", async () => {
    expect(await folderStorage(dir).get("site-1/none.webp")).toBeNull();
  });

  it("a key that would escape the folder touches nothing outside it", async () => {
    const storage = folderStorage(join(dir, "inner"));
    await writeFile(join(dir, "outside.txt"), "keep");
    await expect(storage.put("../outside.txt", bytes("overwritten"), "text/plain")).rejects.toThrow(/Invalid storage key/);
    await expect(storage.get("../outside.txt")).rejects.toThrow(/Invalid storage key/);
    expect(await readFile(join(dir, "outside.txt"), "utf8")).toBe("keep");
  });
});

describe("S3 storage against a local S3 fake (s3rver)", () => {
  let server: InstanceType<typeof S3rver>;
  let dir: string;
  let endpoint: string;
  const credentials = { accessKeyId: "S3RVER", secretAccessKey: "S3RVER" };

  beforeAll(async () => {
    dir = await mkdtemp(join(tmpdir(), "chillwright-s3-"));
    server = new S3rver({ address: "127.0.0.1", port: 0, directory: dir, silent: true });
    const { port } = await server.run();
    endpoint = `http://127.0.0.1:${port}`;
    const admin = new S3Client({ endpoint, region: "us-east-1", forcePathStyle: true, credentials });
    await admin.send(new CreateBucketCommand({ Bucket: "photos" }));
  });
  afterAll(async () => {
    await server?.close();
    await rm(dir, { recursive: true, force: true });
  });

  it("puts an object with its content type and gets the same bytes back; a missing key is null", async () => {
    const storage = s3Storage({ bucket: "photos", endpoint, region: "us-east-1", forcePathStyle: true, ...credentials });
    const image = await sharp({ create: { width: 8, height: 8, channels: 3, background: "#0a6781" } }).webp().toBuffer();
    await storage.put("site-1/a.webp", image, "image/webp");
    expect(Buffer.from((await storage.get("site-1/a.webp"))!).equals(image)).toBe(true);
    const head = await new S3Client({ endpoint, region: "us-east-1", forcePathStyle: true, credentials }).send(new HeadObjectCommand({ Bucket: "photos", Key: "site-1/a.webp" }));
    expect(head.ContentType).toBe("image/webp");
    expect(await storage.get("site-1/missing.webp")).toBeNull();
    await expect(storage.put("../a.webp", image, "image/webp")).rejects.toThrow(/Invalid storage key/);
  });

  it("the configuration picks the bucket when S3_BUCKET is set, and the folder otherwise", async () => {
    const base = { STORAGE_DIR: dir, S3_ENDPOINT: endpoint, S3_REGION: "us-east-1", S3_ACCESS_KEY_ID: "S3RVER", S3_SECRET_ACCESS_KEY: "S3RVER", S3_FORCE_PATH_STYLE: true };
    await storageFor({ ...base, S3_BUCKET: "photos" }).put("site-2/b.webp", bytes("in the bucket"), "image/webp");
    const viaBucket = s3Storage({ bucket: "photos", endpoint, region: "us-east-1", forcePathStyle: true, ...credentials });
    expect(text(await viaBucket.get("site-2/b.webp"))).toBe("in the bucket");
    const folder = storageFor({ ...base, S3_BUCKET: undefined });
    expect(await folder.get("site-2/b.webp")).toBeNull();
  });
});

describe("test images", () => {
  it("the camera JPEG really carries its make, time taken and GPS position", async () => {
    const exif = await readExif(await cameraJpeg());
    expect(exif?.Image?.Make).toBe("Chillwright Test Camera");
    expect(exif?.GPSInfo?.GPSLatitudeRef).toBe("N");
    expect(exif?.GPSInfo?.GPSLatitude).toEqual([39, 44, 30.12]);
    expect(exif?.GPSInfo?.GPSLongitude).toEqual([104, 59, 22.08]);
    expect(exif?.Photo?.DateTimeOriginal).toBeInstanceOf(Date);
  });

  it("an orientation given to the camera JPEG is written, over the same pixels", async () => {
    const meta = await sharp(await cameraJpeg({ width: 400, height: 300, orientation: 6 })).metadata();
    expect(meta).toMatchObject({ width: 400, height: 300, orientation: 6 });
  });

  it("the PNG bombs are a few kilobytes that declare tens of megapixels", async () => {
    const complete = pngBomb(8000, 8000, true);
    expect(complete.length).toBeLessThan(16_000);
    expect(await sharp(complete, { limitInputPixels: false }).metadata()).toMatchObject({ format: "png", width: 8000, height: 8000 });
    const cut = pngBomb(50_000, 50_000, false);
    expect(cut.length).toBeLessThan(1_000);
    expect(await sharp(cut, { limitInputPixels: false }).metadata()).toMatchObject({ width: 50_000, height: 50_000 });
  });

  it("sharp's WebP output without metadata options has only the image chunk", async () => {
    const webp = await sharp(await cameraJpeg()).webp().toBuffer();
    expect(webpChunks(webp)).toEqual(["VP8 "]);
    expect(await readExif(webp)).toBeNull();
  });
});
