import { hash, verify } from '@node-rs/argon2';

// argon2id (the library default algorithm) with OWASP's 2023 baseline: 19 MiB, 2 passes, 1 lane.
const OPTIONS = { memoryCost: 19_456, timeCost: 2, parallelism: 1, outputLen: 32 } as const;

/** Hashes a password with argon2id (PHC string, salt included). */
export async function hashPassword(password: string): Promise<string> {
  return hash(password, OPTIONS);
}

/** Checks a password against a PHC hash; false for any malformed hash. */
export async function verifyPassword(passwordHash: string, password: string): Promise<boolean> {
  try {
    return await verify(passwordHash, password);
  } catch {
    return false;
  }
}

let dummyHash: Promise<string> | null = null;
/** Spends the same time as a real check, so unknown e-mail addresses do not answer faster. */
export async function burnPasswordCheck(password: string): Promise<void> {
  dummyHash ??= hashPassword('quiesce-timing-equaliser');
  await verifyPassword(await dummyHash, password);
}
