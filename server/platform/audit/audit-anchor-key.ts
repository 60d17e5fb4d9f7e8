import {
  createHash,
  createPrivateKey,
  createPublicKey,
  generateKeyPairSync,
  type KeyObject,
} from 'node:crypto';
import {
  chmodSync,
  existsSync,
  mkdirSync,
  readdirSync,
  readFileSync,
  statSync,
  writeFileSync,
} from 'node:fs';
import path from 'node:path';

/**
 * The Ed25519 key that signs audit-chain checkpoints, kept in the anchor folder outside
 * PostgreSQL's reach. A database superuser can read and write files as the `postgres` account
 * (`COPY … TO PROGRAM`, `pg_read_file`), so the key must not be readable by that account: it is
 * created owned by the app's user with mode 0600, in a folder of mode 0700, and a key file that
 * others can read is refused rather than used.
 *
 * Files: `anchor-signing-key.pem` (PKCS#8, private) and `anchor-<keyId>.pub.pem` (SPKI) for every
 * key that ever signed, so checkpoints stay verifiable after the signing key is replaced (move the
 * old private key away and restart; its public file stays). The key id is the first 16 hex digits
 * of SHA-256 over the public key's DER encoding.
 */

const PRIVATE_KEY_FILE = 'anchor-signing-key.pem';
const publicKeyFile = (keyId: string) => `anchor-${keyId}.pub.pem`;
const PUBLIC_KEY_PATTERN = /^anchor-([0-9a-f]{16})\.pub\.pem$/;

export interface AnchorSigningKey {
  keyId: string;
  privateKey: KeyObject;
}

export function keyIdOf(publicKey: KeyObject): string {
  const der = publicKey.export({ type: 'spki', format: 'der' });
  return createHash('sha256').update(der).digest('hex').slice(0, 16);
}

/** Creates the folder (0700) when absent; refuses one that group or others may enter. */
export function ensurePrivateFolder(folder: string): void {
  if (!existsSync(folder)) mkdirSync(folder, { recursive: true, mode: 0o700 });
  refuseOpenToOthers(folder, 'folder');
}

/** Throws when group or others have any access to `file` (mode wider than 0600 / 0700). */
export function refuseOpenToOthers(file: string, what: string): void {
  const mode = statSync(file).mode & 0o777;
  if ((mode & 0o077) !== 0) {
    throw new Error(
      `The audit anchor ${what} ${file} is open to other accounts (mode ${mode.toString(8)}); ` +
        `run chmod go= on it. The key and the checkpoint log must be out of the postgres account's reach.`,
    );
  }
}

/** The signing key of the folder, created on first use. */
export function loadOrCreateSigningKey(folder: string): AnchorSigningKey {
  ensurePrivateFolder(folder);
  const file = path.join(folder, PRIVATE_KEY_FILE);
  if (!existsSync(file)) {
    const { privateKey, publicKey } = generateKeyPairSync('ed25519');
    const keyId = keyIdOf(publicKey);
    writeFileSync(
      path.join(folder, publicKeyFile(keyId)),
      publicKey.export({ type: 'spki', format: 'pem' }),
      {
        mode: 0o600,
      },
    );
    // `wx`: two processes starting at once must not overwrite each other's key.
    try {
      writeFileSync(file, privateKey.export({ type: 'pkcs8', format: 'pem' }), { mode: 0o600, flag: 'wx' });
    } catch (error) {
      if ((error as NodeJS.ErrnoException).code !== 'EEXIST') throw error;
    }
  }
  refuseOpenToOthers(file, 'signing key');
  const privateKey = createPrivateKey(readFileSync(file));
  const publicKey = createPublicKey(privateKey);
  const keyId = keyIdOf(publicKey);
  const publicFile = path.join(folder, publicKeyFile(keyId));
  if (!existsSync(publicFile)) {
    writeFileSync(publicFile, publicKey.export({ type: 'spki', format: 'pem' }), { mode: 0o600 });
  }
  chmodSync(publicFile, 0o600);
  return { keyId, privateKey };
}

/** Every public key of the folder by key id (the current and any earlier signing keys). */
export function readPublicKeys(folder: string): Map<string, { publicKey: KeyObject; pem: string }> {
  const keys = new Map<string, { publicKey: KeyObject; pem: string }>();
  if (!existsSync(folder)) return keys;
  for (const name of readdirSync(folder)) {
    const match = PUBLIC_KEY_PATTERN.exec(name);
    if (!match) continue;
    const pem = readFileSync(path.join(folder, name), 'utf8');
    const publicKey = createPublicKey(pem);
    // A file named for one key but holding another is ignored: its checkpoints will not verify.
    if (keyIdOf(publicKey) === match[1]) keys.set(match[1]!, { publicKey, pem });
  }
  return keys;
}
