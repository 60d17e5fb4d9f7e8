import { hash, verify } from '@node-rs/argon2';

/**
 * Argon2id password hashing (RFC 9106). The parameters follow the RFC's second recommended
 * option, scaled for a 2-core server: 19 MiB memory, 2 passes, 1 lane (OWASP Password Storage
 * Cheat Sheet minimum for Argon2id).
 */
const ARGON2ID = 2; // Algorithm.Argon2id in @node-rs/argon2 (a const enum, not importable under isolatedModules)
const HASH_OPTIONS = { algorithm: ARGON2ID, memoryCost: 19_456, timeCost: 2, parallelism: 1 } as const;

export function hashPassword(password: string): Promise<string> {
  return hash(password, HASH_OPTIONS);
}

export async function verifyPassword(passwordHash: string, password: string): Promise<boolean> {
  try {
    return await verify(passwordHash, password);
  } catch {
    return false;
  }
}

/** Compared against when the e-mail is unknown, so a miss costs the same time as a wrong password. */
let decoyHash: Promise<string> | undefined;
export function decoyPasswordHash(): Promise<string> {
  decoyHash ??= hashPassword('rateledger-decoy-password-never-valid');
  return decoyHash;
}
