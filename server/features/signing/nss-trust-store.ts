import { execFile } from 'node:child_process';
import { createHash, randomBytes, X509Certificate } from 'node:crypto';
import { existsSync, mkdirSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { promisify } from 'node:util';

/**
 * An NSS certificate database that trusts the given CA certificate(s), for poppler's `pdfsig
 * -nssdir`. Without one, pdfsig can check the signature but reports the certificate's issuer as
 * unknown. Each CA certificate is imported with trust "CT,C,C" (a trusted CA for TLS, and a
 * valid CA for e-mail and code signing — the e-mail-signer usage is what pdfsig checks).
 *
 * The database is built once per set of CA certificates, in `<cacheDir>/nss/<sha-256 prefix>`,
 * in a temporary folder renamed into place when complete, so concurrent callers never see a
 * half-built one. An empty `caPem` gives an empty database (nothing trusted), so pdfsig never
 * falls back to the user's own ~/.pki/nssdb. The path returned is absolute: pdfsig 22.12 does
 * not resolve a relative `-nssdir` correctly.
 *
 * Reference: NSS certutil documentation (firefox-source-docs.mozilla.org, "NSS tools:
 * certutil": -N new database, -A add certificate, -t trust arguments).
 *
 * Throws when `caPem` holds something that is not a certificate, or certutil fails or is missing
 * (Debian package libnss3-tools).
 *
 * Example: await nssTrustStore(readFileSync('ca.pem', 'utf8'), '.data/signing') →
 * "/abs/.data/signing/nss/3fa9c0…".
 */

const run = promisify(execFile);
const CERTUTIL_TIMEOUT_MS = 15_000;
const PEM_BLOCK = /-----BEGIN CERTIFICATE-----[\s\S]+?-----END CERTIFICATE-----/g;

export function certificatesFromPem(caPem: string): X509Certificate[] {
  return (caPem.match(PEM_BLOCK) ?? []).map((block) => new X509Certificate(block));
}

async function certutil(...args: string[]): Promise<void> {
  await run('certutil', args, { timeout: CERTUTIL_TIMEOUT_MS, killSignal: 'SIGKILL' });
}

export async function nssTrustStore(caPem: string, cacheDir: string): Promise<string> {
  const certificates = certificatesFromPem(caPem);
  const hash = createHash('sha256');
  for (const certificate of certificates) hash.update(certificate.raw);
  const root = path.resolve(cacheDir, 'nss');
  const target = path.join(root, certificates.length ? hash.digest('hex').slice(0, 24) : 'empty');
  if (existsSync(path.join(target, 'cert9.db'))) return target;
  mkdirSync(root, { recursive: true, mode: 0o700 });
  const building = path.join(root, `.build-${process.pid}-${randomBytes(6).toString('hex')}`);
  mkdirSync(building, { mode: 0o700 });
  try {
    await certutil('-N', '-d', `sql:${building}`, '--empty-password');
    for (const [index, certificate] of certificates.entries()) {
      const file = path.join(building, `ca-${index}.pem`);
      writeFileSync(file, certificate.toString());
      await certutil(
        '-A',
        '-d',
        `sql:${building}`,
        '-n',
        `rateledger-trusted-${index}`,
        '-t',
        'CT,C,C',
        '-i',
        file,
      );
      rmSync(file);
    }
    try {
      renameSync(building, target);
    } catch (error) {
      // Another process finished first (rename onto a non-empty folder fails): use theirs.
      if (!existsSync(path.join(target, 'cert9.db'))) throw error;
    }
  } finally {
    rmSync(building, { recursive: true, force: true });
  }
  return target;
}
