import { hash, verify } from "@node-rs/argon2";
import { createHash, randomBytes, timingSafeEqual } from "node:crypto";

// argon2id with the library's defaults (19 MiB, 2 passes): OWASP's minimum recommendation.
export const hashSecret = (plain: string) => hash(plain);
// Checking against a throwaway hash when there is none keeps "no such account" as slow as "wrong password".
let throwaway: Promise<string> | undefined;
export async function verifySecret(stored: string | null | undefined, plain: string) {
  if (!stored) {
    throwaway ??= hash(makeToken());
    await verify(await throwaway, plain).catch(() => false);
    return false;
  }
  return verify(stored, plain).catch(() => false);
}

/** A random token of 256 bits, URL-safe. Only its hash is stored. */
export const makeToken = (bytes = 32) => randomBytes(bytes).toString("base64url");
export const hashToken = (token: string) => createHash("sha256").update(token).digest("hex");
export function sameHash(a: string, b: string) {
  const x = Buffer.from(a);
  const y = Buffer.from(b);
  return x.length === y.length && timingSafeEqual(x, y);
}
