import { scryptSync } from "node:crypto";
import { describe, expect, it } from "vitest";
import { SCRYPT_PARAMS, hashPassword, needsRehash, parseHash, passwordProblem, pinProblem, verifyPassword } from "@/lib/auth/password";

/*
 * Parameters: OWASP Password Storage Cheat Sheet
 * (https://cheatsheetseries.owasp.org/cheatsheets/Password_Storage_Cheat_Sheet.html), scrypt section:
 * "use scrypt with a minimum CPU/memory cost parameter of (2^17), a minimum block size of 8
 * (1024 bytes), and a parallelization parameter of 1". The wording was checked against a
 * page quoting the cheat sheet, not the cheat sheet itself.
 */
describe("password hashing (scrypt)", () => {
  it("uses OWASP's scrypt parameters N=2^17, r=8, p=1, a 16-byte salt and a 64-byte key", async () => {
    expect(SCRYPT_PARAMS).toMatchObject({ ln: 17, r: 8, p: 1, saltLength: 16, keyLength: 64 });
    const stored = await hashPassword("correct horse battery staple");
    expect(stored).toMatch(/^\$scrypt\$ln=17,r=8,p=1\$[A-Za-z0-9+/]{22}\$[A-Za-z0-9+/]{86}$/);
    const parsed = parseHash(stored)!;
    expect(2 ** parsed.ln).toBe(131072);
    expect(parsed.salt).toHaveLength(16);
    expect(parsed.key).toHaveLength(64);
  });

  it("round-trips, refuses a wrong password, and salts each hash", async () => {
    const stored = await hashPassword("correct horse battery staple");
    expect(await verifyPassword("correct horse battery staple", stored)).toBe(true);
    expect(await verifyPassword("correct horse battery stapler", stored)).toBe(false);
    expect(await verifyPassword("", stored)).toBe(false);
    const again = await hashPassword("correct horse battery staple");
    expect(again).not.toBe(stored);
    expect(await verifyPassword("correct horse battery staple", again)).toBe(true);
  });

  it("derives exactly scrypt(password, salt, N=2^17, r=8, p=1, 64) as computed independently", async () => {
    const stored = await hashPassword("pa55word-for-the-check");
    const { salt, key } = parseHash(stored)!;
    const independent = scryptSync("pa55word-for-the-check", salt, 64, { N: 2 ** 17, r: 8, p: 1, maxmem: 256 * 1024 * 1024 });
    expect(independent.equals(key)).toBe(true);
  });

  it("treats a missing or malformed hash as no match", async () => {
    expect(await verifyPassword("x", null)).toBe(false);
    expect(await verifyPassword("x", "plain-text")).toBe(false);
    expect(await verifyPassword("x", "$scrypt$ln=99,r=8,p=1$AAAA$BBBB")).toBe(false);
    expect(needsRehash("$scrypt$ln=14,r=8,p=1$AAAAAAAAAAAAAAAAAAAAAA$" + "A".repeat(86))).toBe(true);
  });

  it("checks length for passwords and digits for PINs", () => {
    expect(passwordProblem("short")).not.toBeNull();
    expect(passwordProblem("twelve chars")).toBeNull();
    expect(pinProblem("2468")).toBeNull();
    expect(pinProblem("12a4")).not.toBeNull();
    expect(pinProblem("123")).not.toBeNull();
  });
});
