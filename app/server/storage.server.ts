import { GetObjectCommand, PutObjectCommand, S3Client } from "@aws-sdk/client-s3";
import { randomBytes } from "node:crypto";
import { mkdir, readFile, rename, rm, writeFile } from "node:fs/promises";
import { dirname, resolve, sep } from "node:path";
import type { Env } from "./env.server";

/** Where photo bytes live. Records are kept, so there is no delete. */
export interface Storage {
  put(key: string, bytes: Uint8Array, contentType: string): Promise<void>;
  get(key: string): Promise<Uint8Array<ArrayBuffer> | null>;
}

// Segments of letters, digits, "-" and "_", with one optional extension: no "..", no absolute paths.
const keyPattern = /^[A-Za-z0-9_-]+(\/[A-Za-z0-9_-]+)*(\.[a-z0-9]+)?$/;

export function assertStorageKey(key: string) {
  if (key.length > 512 || !keyPattern.test(key)) throw new Error(`Invalid storage key: ${JSON.stringify(key)}`);
  return key;
}

/** Files under `dir`, one per key; folders are made as needed. */
export function folderStorage(dir: string): Storage {
  const root = resolve(dir);
  const pathOf = (key: string) => {
    const path = resolve(root, assertStorageKey(key));
    if (!path.startsWith(root + sep)) throw new Error(`Storage key escapes the folder: ${JSON.stringify(key)}`);
    return path;
  };
  return {
    async put(key, bytes) {
      const path = pathOf(key);
      await mkdir(dirname(path), { recursive: true });
      // Written aside and renamed, so a reader never sees half a file.
      const temp = `${path}.${randomBytes(6).toString("hex")}.part`;
      try {
        await writeFile(temp, bytes, { flag: "wx" });
        await rename(temp, path);
      } catch (error) {
        await rm(temp, { force: true });
        throw error;
      }
    },
    async get(key) {
      try {
        return new Uint8Array(await readFile(pathOf(key)));
      } catch (error) {
        if ((error as NodeJS.ErrnoException).code === "ENOENT") return null;
        throw error;
      }
    },
  };
}

export type S3Config = {
  bucket: string;
  endpoint?: string;
  region: string;
  accessKeyId?: string;
  secretAccessKey?: string;
  forcePathStyle: boolean;
};

/** Objects in an S3-compatible bucket; path-style addressing for local fakes and most self-hosted stores. */
export function s3Storage(config: S3Config): Storage {
  const client = new S3Client({
    endpoint: config.endpoint,
    region: config.region,
    forcePathStyle: config.forcePathStyle,
    credentials: config.accessKeyId && config.secretAccessKey ? { accessKeyId: config.accessKeyId, secretAccessKey: config.secretAccessKey } : undefined,
  });
  return {
    async put(key, bytes, contentType) {
      await client.send(new PutObjectCommand({ Bucket: config.bucket, Key: assertStorageKey(key), Body: bytes, ContentType: contentType }));
    },
    async get(key) {
      try {
        const res = await client.send(new GetObjectCommand({ Bucket: config.bucket, Key: assertStorageKey(key) }));
        return res.Body ? new Uint8Array(await res.Body.transformToByteArray()) : null;
      } catch (error) {
        const e = error as { name?: string; $metadata?: { httpStatusCode?: number } };
        if (e.name === "NoSuchKey" || e.$metadata?.httpStatusCode === 404) return null;
        throw error;
      }
    },
  };
}

type StorageEnv = Pick<Env, "STORAGE_DIR" | "S3_ENDPOINT" | "S3_BUCKET" | "S3_REGION" | "S3_ACCESS_KEY_ID" | "S3_SECRET_ACCESS_KEY" | "S3_FORCE_PATH_STYLE">;

/** The bucket when S3_BUCKET is set, the local folder otherwise. */
export function storageFor(env: StorageEnv): Storage {
  if (env.S3_BUCKET) {
    return s3Storage({
      bucket: env.S3_BUCKET,
      endpoint: env.S3_ENDPOINT,
      region: env.S3_REGION,
      accessKeyId: env.S3_ACCESS_KEY_ID,
      secretAccessKey: env.S3_SECRET_ACCESS_KEY,
      forcePathStyle: env.S3_FORCE_PATH_STYLE,
    });
  }
  return folderStorage(env.STORAGE_DIR);
}
