// The session token's encode and decode, in next-auth's own format (JWE, "dir" with A256GCM, the key
// derived from NEXTAUTH_SECRET by HKDF-SHA256), with the derived key kept instead of derived again on
// every request: next-auth derives it per call, and that derivation was a sixth of a chart request's
// CPU time (bench/trend-api.ts). Tokens are interchangeable with next-auth's own encode/decode (tested).
import { EncryptJWT, jwtDecrypt } from "jose";
import type { JWT, JWTDecodeParams, JWTEncodeParams } from "next-auth/jwt";

/** next-auth's default lifetime when none is given (30 days); Rimwatch always passes its shift length. */
const DEFAULT_MAX_AGE_SECONDS = 30 * 24 * 60 * 60;
const text = new TextEncoder();
const keys = new Map<string, Promise<Uint8Array>>();

async function hkdfKey(secret: Uint8Array<ArrayBuffer>, salt: string): Promise<Uint8Array> {
  const base = await crypto.subtle.importKey("raw", secret, "HKDF", false, ["deriveBits"]);
  const info = `NextAuth.js Generated Encryption Key${salt ? ` (${salt})` : ""}`;
  const bits = await crypto.subtle.deriveBits({ name: "HKDF", hash: "SHA-256", salt: text.encode(salt), info: text.encode(info) }, base, 256);
  return new Uint8Array(bits);
}

function derivedKey(secret: string | Buffer, salt: string): Promise<Uint8Array> {
  const material: Uint8Array<ArrayBuffer> = typeof secret === "string" ? text.encode(secret) : Uint8Array.from(secret);
  const id = `${salt}\u0000${Buffer.from(material).toString("base64")}`;
  let key = keys.get(id);
  if (!key) {
    if (keys.size >= 8) keys.clear(); // a secret is rotated rarely; never let the cache grow
    key = hkdfKey(material, salt);
    keys.set(id, key);
    key.catch(() => keys.delete(id));
  }
  return key;
}

export async function encode({ token = {}, secret, maxAge = DEFAULT_MAX_AGE_SECONDS, salt = "" }: JWTEncodeParams): Promise<string> {
  const key = await derivedKey(secret, salt);
  return new EncryptJWT(token)
    .setProtectedHeader({ alg: "dir", enc: "A256GCM" })
    .setIssuedAt()
    .setExpirationTime(Math.floor(Date.now() / 1000) + maxAge)
    .setJti(crypto.randomUUID())
    .encrypt(key);
}

export async function decode({ token, secret, salt = "" }: JWTDecodeParams): Promise<JWT | null> {
  if (!token) return null;
  const key = await derivedKey(secret, salt);
  const { payload } = await jwtDecrypt(token, key, { clockTolerance: 15 });
  return payload;
}
