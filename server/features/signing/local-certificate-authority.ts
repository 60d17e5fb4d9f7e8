import { createHash, createPrivateKey, randomBytes, X509Certificate } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, renameSync } from 'node:fs';
import path from 'node:path';
import { withFileLock } from './file-lock.ts';
import {
  createCertificateAuthority,
  type IssuedCertificate,
  issueSigningCertificate,
} from './issue-certificates.ts';
import { readPkcs12, writePkcs12 } from './pkcs12.ts';
import type { SigningConfig } from './signing-config.ts';
import { writeFileAtomic } from './write-file-atomic.ts';

/**
 * The certificate the PDF seal is made with, and the CA certificate a verifier should trust.
 *
 * Local mode (no `p12Path` configured): on first use a local certificate authority is created in
 * `signingDir` — `ca.pem` (its certificate, public), `ca-key.pem` (its private key, encrypted
 * PKCS#8, mode 0600) — and then, for each organisation, a signing certificate issued by it,
 * `signers/<name>-<hash>.p12` (mode 0600). The passphrase of these files is `config.passphrase`
 * or a random one kept in `signingDir/passphrase` (mode 0600). Later calls, and later starts,
 * reuse the files. Creation happens under a lock file and every file is written to a temporary
 * name and renamed, so two processes starting together end up with one CA, and a crash never
 * leaves a half-written file. A signing certificate within 30 days of expiry is replaced by a
 * new one from the same CA (the old file is kept beside it).
 *
 * Configured mode (`p12Path`): that PKCS#12 file is used for every organisation; `caPem` is the
 * content of `caPemPath` when given, else the issuer certificates inside the file.
 *
 * Private keys never leave this module except inside the returned PKCS#12 bytes; nothing here
 * logs.
 *
 * Reference: RFC 5280 (certificates), RFC 7292 (PKCS #12); 21 CFR 11.70 asks that signatures be
 * linked to their records so they cannot be copied by ordinary means — the seal is that link
 * inside the PDF file.
 *
 * Throws when the configured file cannot be read or opened, when the stored files cannot be
 * opened with the passphrase (it changed), and on file system errors.
 *
 * Example: (await loadSigningIdentity({ signingDir: '.data/signing', organisationName: 'Northwind
 * Stability Lab' })).subject → "CN=Northwind Stability Lab, O=Northwind Stability Lab".
 */

export interface SigningIdentity {
  /** PKCS#12 file: private key, signing certificate and its issuers. */
  p12: Buffer;
  passphrase: string;
  /** The signing certificate (PEM). */
  certificatePem: string;
  /** Issuer certificates to embed in the signature, leaf's issuer first (PEM each). */
  chainPems: string[];
  /** CA certificate(s) a verifier should trust (PEM, possibly several); '' when unknown. */
  caPem: string;
  /** The signing certificate's subject, e.g. "CN=Lab, O=Lab". */
  subject: string;
  /** SHA-256 of the signing certificate's DER, "AB:CD:…" as OpenSSL prints it. */
  fingerprintSha256: string;
  notAfter: Date;
  source: 'local-ca' | 'configured';
}

export interface SigningIdentityRequest extends SigningConfig {
  /** Names the organisation's certificate (CN and O) in local mode; at most 64 characters used. */
  organisationName: string;
}

const RENEW_BEFORE_EXPIRY_MS = 30 * 24 * 3600_000;
/** X.520 upper bound for commonName and organizationName (RFC 5280 Appendix A.1). */
const NAME_MAX_LENGTH = 64;

export const subjectText = (certificate: X509Certificate) => certificate.subject.split('\n').join(', ');

function identityFrom(
  p12: Buffer,
  passphrase: string,
  caPem: string | undefined,
  source: SigningIdentity['source'],
): SigningIdentity {
  const contents = readPkcs12(p12, passphrase);
  const chainPems = contents.chain.map((certificate) => certificate.toString());
  return {
    p12,
    passphrase,
    certificatePem: contents.certificate.toString(),
    chainPems,
    caPem: caPem ?? chainPems.join(''),
    subject: subjectText(contents.certificate),
    fingerprintSha256: contents.certificate.fingerprint256,
    notAfter: new Date(contents.certificate.validTo),
    source,
  };
}

function signerFileName(organisationName: string): string {
  const readable = organisationName
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, 40);
  const hash = createHash('sha256').update(organisationName, 'utf8').digest('hex').slice(0, 12);
  return `${readable || 'organisation'}-${hash}.p12`;
}

function readPassphrase(config: SigningConfig, create: boolean): string | undefined {
  if (config.passphrase) return config.passphrase;
  const file = path.join(config.signingDir, 'passphrase');
  if (existsSync(file)) return readFileSync(file, 'utf8').trim();
  if (!create) return undefined;
  const passphrase = randomBytes(32).toString('base64url');
  writeFileAtomic(file, `${passphrase}\n`, 0o600);
  return passphrase;
}

function readAuthority(signingDir: string, passphrase: string): IssuedCertificate {
  const certificatePem = readFileSync(path.join(signingDir, 'ca.pem'), 'utf8');
  let privateKeyPem: string;
  try {
    privateKeyPem = createPrivateKey({ key: readFileSync(path.join(signingDir, 'ca-key.pem')), passphrase })
      .export({ type: 'pkcs8', format: 'pem' })
      .toString();
  } catch {
    throw new Error(`The local CA key in ${signingDir} cannot be opened with the configured passphrase.`);
  }
  return { certificatePem, privateKeyPem };
}

async function ensureAuthority(signingDir: string, passphrase: string): Promise<IssuedCertificate> {
  if (existsSync(path.join(signingDir, 'ca.pem')) && existsSync(path.join(signingDir, 'ca-key.pem'))) {
    return readAuthority(signingDir, passphrase);
  }
  const authority = await createCertificateAuthority({
    commonName: `Rateledger local CA ${randomBytes(4).toString('hex')}`,
    organisation: 'Rateledger local certificate authority',
  });
  const encryptedKey = createPrivateKey(authority.privateKeyPem)
    .export({ type: 'pkcs8', format: 'pem', cipher: 'aes-256-cbc', passphrase })
    .toString();
  writeFileAtomic(path.join(signingDir, 'ca-key.pem'), encryptedKey, 0o600);
  writeFileAtomic(path.join(signingDir, 'ca.pem'), authority.certificatePem, 0o644); // the key first: ca.pem marks completion
  return authority;
}

function isFresh(identity: SigningIdentity, now: Date): boolean {
  return identity.notAfter.getTime() - now.getTime() > RENEW_BEFORE_EXPIRY_MS;
}

async function loadLocalIdentity(request: SigningIdentityRequest): Promise<SigningIdentity> {
  const { signingDir } = request;
  const organisation = request.organisationName.trim().slice(0, NAME_MAX_LENGTH);
  if (!organisation) throw new Error('A signing certificate needs an organisation name.');
  const signerFile = path.join(signingDir, 'signers', signerFileName(organisation));
  const caFile = path.join(signingDir, 'ca.pem');
  const existing = (): SigningIdentity | undefined => {
    const passphrase = readPassphrase(request, false);
    if (!passphrase || !existsSync(signerFile) || !existsSync(caFile)) return undefined;
    const identity = identityFrom(
      readFileSync(signerFile),
      passphrase,
      readFileSync(caFile, 'utf8'),
      'local-ca',
    );
    // A certificate from an earlier CA (ca.pem was replaced by hand) would never be trusted: reissue.
    const ca = new X509Certificate(identity.caPem);
    const signer = new X509Certificate(identity.certificatePem);
    const issuedByCa = signer.checkIssued(ca) && signer.verify(ca.publicKey);
    return issuedByCa && isFresh(identity, new Date()) ? identity : undefined;
  };
  const found = existing();
  if (found) return found;
  mkdirSync(path.join(signingDir, 'signers'), { recursive: true, mode: 0o700 });
  return withFileLock(path.join(signingDir, '.lock'), async () => {
    const createdMeanwhile = existing();
    if (createdMeanwhile) return createdMeanwhile;
    const passphrase = readPassphrase(request, true) as string;
    const authority = await ensureAuthority(signingDir, passphrase);
    if (existsSync(signerFile)) renameSync(signerFile, `${signerFile}.replaced-${Date.now()}`);
    const signer = await issueSigningCertificate({ authority, organisation });
    const p12 = writePkcs12(
      signer.privateKeyPem,
      [signer.certificatePem, authority.certificatePem],
      passphrase,
      organisation,
    );
    writeFileAtomic(signerFile, p12, 0o600);
    return identityFrom(p12, passphrase, authority.certificatePem, 'local-ca');
  });
}

const cache = new Map<string, Promise<SigningIdentity>>();

export function loadSigningIdentity(request: SigningIdentityRequest): Promise<SigningIdentity> {
  const key = JSON.stringify([
    request.signingDir,
    request.p12Path ?? null,
    request.p12Path ? '' : request.organisationName,
    createHash('sha256')
      .update(request.passphrase ?? '')
      .digest('hex'),
  ]);
  const cached = cache.get(key);
  if (cached) {
    return cached.then((identity) => {
      if (identity.source === 'configured' || isFresh(identity, new Date())) return identity;
      cache.delete(key);
      return loadSigningIdentity(request);
    });
  }
  const loading = (async () => {
    if (!request.p12Path) return loadLocalIdentity(request);
    if (!request.passphrase) throw new Error('SIGNING_P12_PASSPHRASE must be set with SIGNING_P12_PATH.');
    const caPem = request.caPemPath ? readFileSync(request.caPemPath, 'utf8') : undefined;
    return identityFrom(readFileSync(request.p12Path), request.passphrase, caPem, 'configured');
  })();
  cache.set(key, loading);
  loading.catch(() => cache.delete(key));
  return loading;
}

/** Forgets cached identities (tests; after rotating a configured certificate). */
export function clearSigningIdentityCache(): void {
  cache.clear();
}
