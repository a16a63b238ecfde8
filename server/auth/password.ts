import argon2 from "argon2";

/**
 * Password hashing at the OWASP Password Storage Cheat Sheet minimum for argon2id:
 * m = 19 MiB (19456 KiB), t = 2, p = 1. better-auth's default scrypt is below it.
 */
export const ARGON2_PARAMS = { type: argon2.argon2id, memoryCost: 19456, timeCost: 2, parallelism: 1 } as const;

export function hashPassword(password: string): Promise<string> {
  return argon2.hash(password, ARGON2_PARAMS);
}

export async function verifyPassword({ hash, password }: { hash: string; password: string }): Promise<boolean> {
  try {
    return await argon2.verify(hash, password);
  } catch {
    return false;
  }
}
