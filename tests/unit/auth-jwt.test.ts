// Rimwatch's session token encode/decode (lib/auth/jwt.ts) keeps the derived key, and must stay
// interchangeable with next-auth's own: a token made by either opens with the other, and a wrong
// secret or a tampered token does not open.
import { describe, expect, it } from "vitest";
import { decode as nextAuthDecode, encode as nextAuthEncode } from "next-auth/jwt";
import { decode, encode } from "../../lib/auth/jwt";

const secret = "unit-test-secret-0123456789";
const token = { sub: "6a0c6f7e-2b1d-4c55-9a4e-111111111111", role: "registrar" as const, teamId: "team-a", signedInAt: 1_764_000_000_000 };

describe("session tokens", () => {
  it("opens next-auth's tokens, and next-auth opens ours", async () => {
    const theirs = await nextAuthEncode({ token, secret, maxAge: 3600 });
    expect(await decode({ token: theirs, secret })).toMatchObject(token);
    const ours = await encode({ token, secret, maxAge: 3600 });
    expect(await nextAuthDecode({ token: ours, secret })).toMatchObject(token);
  });

  it("sets the expiry from maxAge and a fresh token id each time", async () => {
    const before = Math.floor(Date.now() / 1000);
    const a = await decode({ token: await encode({ token, secret, maxAge: 8 * 3600 }), secret });
    const b = await decode({ token: await encode({ token, secret, maxAge: 8 * 3600 }), secret });
    expect(Number(a?.exp) - before).toBeGreaterThanOrEqual(8 * 3600);
    expect(Number(a?.exp) - before).toBeLessThanOrEqual(8 * 3600 + 2);
    expect(a?.jti).toBeTruthy();
    expect(a?.jti).not.toBe(b?.jti);
  });

  it("refuses a token made with another secret, a tampered token and an expired one", async () => {
    const ours = await encode({ token, secret, maxAge: 3600 });
    await expect(decode({ token: ours, secret: "another-secret-entirely" })).rejects.toThrow();
    const parts = ours.split(".");
    const cipher = parts[3] ?? "";
    parts[3] = (cipher[0] === "A" ? "B" : "A") + cipher.slice(1);
    await expect(decode({ token: parts.join("."), secret })).rejects.toThrow();
    const expired = await encode({ token, secret, maxAge: -60 }); // past the 15 s clock tolerance
    await expect(decode({ token: expired, secret })).rejects.toThrow();
    expect(await decode({ token: undefined, secret })).toBeNull();
  });

  it("keeps a salted key apart from the plain one (next-auth's salt parameter)", async () => {
    const salted = await encode({ token, secret, salt: "x", maxAge: 3600 });
    expect(await nextAuthDecode({ token: salted, secret, salt: "x" })).toMatchObject(token);
    await expect(decode({ token: salted, secret })).rejects.toThrow();
  });
});
