import { execFile } from 'node:child_process';
import { X509Certificate } from 'node:crypto';
import { readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { promisify } from 'node:util';
import { afterAll, describe, expect, it } from 'vitest';
import { createCertificateAuthority, issueSigningCertificate } from './issue-certificates.ts';
import { clearSigningIdentityCache, loadSigningIdentity } from './local-certificate-authority.ts';
import { readPkcs12, writePkcs12 } from './pkcs12.ts';
import { sealPdf } from './seal-pdf.ts';
import { signingConfigFromEnv } from './signing-config.ts';
import { samplePdf, scratchDir, tool } from './signing-test-support.ts';
import { verifyPdfSeal } from './verify-pdf.ts';

/**
 * The local certificate authority, checked with OpenSSL 3 (`openssl x509 -text`, `openssl
 * verify`) as the outside reading of the certificates, and poppler's pdfsig through
 * verifyPdfSeal for a configured certificate made by OpenSSL.
 */

const run = promisify(execFile);
const folders: string[] = [];
const fresh = (label: string) => {
  const folder = scratchDir(label);
  folders.push(folder);
  return folder;
};
afterAll(() => {
  for (const folder of folders) rmSync(folder, { recursive: true, force: true });
});
const mode = (file: string) => statSync(file).mode & 0o777;
const organisationName = 'Northwind Stability Lab (invented)';

describe('the local certificate authority', () => {
  const signingDir = fresh('ca');

  it('creates a CA and an organisation certificate with the required extensions (openssl x509)', async () => {
    const identity = await loadSigningIdentity({ signingDir, organisationName });
    expect(identity.source).toBe('local-ca');
    expect(identity.subject).toBe(`CN=${organisationName}, O=${organisationName}`);
    const ca = tool('openssl', ['x509', '-noout', '-text', '-in', path.join(signingDir, 'ca.pem')]);
    expect(ca).toMatch(/Basic Constraints: critical\s+CA:TRUE/);
    expect(ca).toMatch(/Key Usage: critical\s+Certificate Sign, CRL Sign/);
    expect(ca).toMatch(/Public-Key: \(3072 bit\)/);
    const leafFile = path.join(signingDir, 'leaf.pem');
    writeFileSync(leafFile, identity.certificatePem);
    const leaf = tool('openssl', ['x509', '-noout', '-text', '-in', leafFile]);
    expect(leaf).toMatch(/Signature Algorithm: sha256WithRSAEncryption/);
    expect(leaf).toMatch(/Basic Constraints: critical\s+CA:FALSE/);
    expect(leaf).toMatch(/Key Usage: critical\s+Digital Signature, Non Repudiation/);
    expect(leaf).not.toContain('Extended Key Usage'); // NSS rejects emailProtection (see issue-certificates.ts)
    expect(leaf).toContain(`Subject: CN = ${organisationName}, O = ${organisationName}`);
    expect(tool('openssl', ['verify', '-CAfile', path.join(signingDir, 'ca.pem'), leafFile])).toContain(
      ': OK',
    );
    // Generating two 3072-bit RSA keys in JavaScript takes seconds on a busy 2-core
    // machine; this checks the certificates, not the speed (it timed out at 5 s under load).
  }, 60_000);

  it('keeps secrets out of reach: key, passphrase and P12 are mode 0600, the folders 0700', () => {
    expect(mode(path.join(signingDir, 'ca-key.pem'))).toBe(0o600);
    expect(mode(path.join(signingDir, 'passphrase'))).toBe(0o600);
    expect(mode(signingDir)).toBe(0o700);
    const signers = path.join(signingDir, 'signers');
    expect(mode(signers)).toBe(0o700);
    for (const file of readdirSync(signers)) expect(mode(path.join(signers, file))).toBe(0o600);
    expect(readFileSync(path.join(signingDir, 'ca-key.pem'), 'utf8')).toContain(
      'BEGIN ENCRYPTED PRIVATE KEY',
    );
  });

  it('reuses the same CA and certificate on a later start', async () => {
    const first = await loadSigningIdentity({ signingDir, organisationName });
    clearSigningIdentityCache(); // as a new process would
    const second = await loadSigningIdentity({ signingDir, organisationName });
    expect(second.fingerprintSha256).toBe(first.fingerprintSha256);
    expect(second.caPem).toBe(first.caPem);
  });

  it('issues a separate certificate per organisation from the same CA', async () => {
    const first = await loadSigningIdentity({ signingDir, organisationName });
    const other = await loadSigningIdentity({
      signingDir,
      organisationName: 'Harbour Analytical (invented)',
    });
    expect(other.fingerprintSha256).not.toBe(first.fingerprintSha256);
    expect(other.caPem).toBe(first.caPem);
    expect(new X509Certificate(other.certificatePem).checkIssued(new X509Certificate(other.caPem))).toBe(
      true,
    );
  });

  it('refuses to open the stored files with another passphrase', async () => {
    clearSigningIdentityCache();
    await expect(
      loadSigningIdentity({ signingDir, organisationName, passphrase: 'not-the-passphrase' }),
    ).rejects.toThrow(/passphrase/);
  });
});

describe('concurrent first starts', () => {
  it('four processes starting at once share one CA and one certificate', async () => {
    const signingDir = fresh('ca-race');
    const script = path.resolve(import.meta.dirname, '../../../tests/support/show-signing-identity.ts');
    const tsx = path.resolve(import.meta.dirname, '../../../node_modules/.bin/tsx');
    const outputs = await Promise.all(
      Array.from({ length: 4 }, () =>
        run(tsx, [script, organisationName], {
          env: { ...process.env, SIGNING_DIR: signingDir },
          timeout: 60_000,
        }),
      ),
    );
    const identities = outputs.map(({ stdout }) => JSON.parse(stdout) as Record<string, string>);
    expect(new Set(identities.map((identity) => identity.caFingerprintSha256)).size).toBe(1);
    expect(new Set(identities.map((identity) => identity.fingerprintSha256)).size).toBe(1);
    expect(readdirSync(path.join(signingDir, 'signers'))).toHaveLength(1);
    expect(readdirSync(signingDir).sort()).toEqual(['ca-key.pem', 'ca.pem', 'passphrase', 'signers']);
  }, 90_000);
});

describe('a configured certificate', () => {
  it('is used instead of the local CA: an EC P-256 PKCS#12 made by OpenSSL', async () => {
    const folder = fresh('external');
    const file = (name: string) => path.join(folder, name);
    // An outside CA and organisation certificate, both EC P-256, made by the OpenSSL CLI.
    const script = [
      'set -e',
      'EC="-newkey ec -pkeyopt ec_paramgen_curve:P-256 -nodes"',
      'openssl req -x509 $EC -keyout ca.key -out ca.pem -days 30 -subj "/CN=Example Trust Services (invented)"' +
        ' -addext "basicConstraints=critical,CA:TRUE" -addext "keyUsage=critical,keyCertSign,cRLSign"',
      'openssl req $EC -keyout leaf.key -out leaf.csr' +
        ' -subj "/CN=Harbour Analytical QA (invented)/O=Harbour Analytical (invented)"',
      'printf "basicConstraints=critical,CA:FALSE\\nkeyUsage=critical,digitalSignature,nonRepudiation\\n" > leaf.cnf',
      'openssl x509 -req -in leaf.csr -CA ca.pem -CAkey ca.key -CAcreateserial -out leaf.pem -days 30 -extfile leaf.cnf',
      'openssl pkcs12 -export -inkey leaf.key -in leaf.pem -certfile ca.pem -out org.p12 -passout "pass:correct horse"',
    ].join('\n');
    await run('bash', ['-c', script], { cwd: folder });

    const config = signingConfigFromEnv(
      {
        SIGNING_DIR: folder,
        SIGNING_P12_PATH: 'org.p12',
        SIGNING_P12_PASSPHRASE: 'correct horse',
        SIGNING_CA_PEM: 'ca.pem',
      },
      folder,
    );
    const identity = await loadSigningIdentity({
      ...config,
      organisationName: 'ignored when a certificate is configured',
    });
    expect(identity.source).toBe('configured');
    expect(identity.subject).toBe('CN=Harbour Analytical QA (invented), O=Harbour Analytical (invented)');
    expect(identity.fingerprintSha256).toBe(
      new X509Certificate(readFileSync(file('leaf.pem'))).fingerprint256,
    );
    expect(readdirSync(folder)).not.toContain('ca-key.pem'); // no local CA was made

    const sealed = await sealPdf(await samplePdf(), {
      identity,
      reason: 'Approved',
      signerName: 'K. Lindqvist',
    });
    const result = await verifyPdfSeal(sealed, { caPem: identity.caPem, cacheDir: folder });
    expect(result).toMatchObject({
      signed: true,
      valid: true,
      trusted: true,
      signerCommonName: 'Harbour Analytical QA (invented)',
    });
  }, 60_000);

  it('a P12 path without its passphrase is a configuration error naming the variable', () => {
    expect(() => signingConfigFromEnv({ SIGNING_P12_PATH: '/x.p12' })).toThrow(/SIGNING_P12_PASSPHRASE/);
  });
});

describe('certificate names', () => {
  it('write an organisation name outside ASCII as UTF8String, and the issuer as the CA spells it', async () => {
    const authority = await createCertificateAuthority({
      commonName: 'Autorité locale (invented)',
      organisation: 'Laboratoire Œstrogène',
    });
    const organisation = 'Laboratoire de Stabilité Süd (invented)';
    const signer = await issueSigningCertificate({ authority, organisation });
    const leaf = new X509Certificate(signer.certificatePem);
    const ca = new X509Certificate(authority.certificatePem);
    expect(leaf.subject).toBe(`CN=${organisation}\nO=${organisation}`);
    expect(leaf.issuer).toBe(ca.subject);
    expect(leaf.checkIssued(ca) && leaf.verify(ca.publicKey)).toBe(true);
    const file = path.join(fresh('utf8-name'), 'leaf.pem');
    writeFileSync(file, signer.certificatePem);
    expect(tool('openssl', ['asn1parse', '-in', file])).toMatch(/UTF8STRING\s+:Laboratoire de Stabilit/);
  });
});

describe('PKCS#12 files', () => {
  it('carry the issued certificates byte for byte, and open with OpenSSL', async () => {
    const authority = await createCertificateAuthority({ commonName: 'Rateledger test CA (invented)' });
    const signer = await issueSigningCertificate({ authority, organisation: organisationName });
    const p12 = writePkcs12(
      signer.privateKeyPem,
      [signer.certificatePem, authority.certificatePem],
      'pw',
      'x',
    );
    const contents = readPkcs12(p12, 'pw');
    expect(contents.certificate.raw.equals(new X509Certificate(signer.certificatePem).raw)).toBe(true);
    expect(contents.chain.map((certificate) => certificate.raw.toString('hex'))).toEqual([
      new X509Certificate(authority.certificatePem).raw.toString('hex'),
    ]);
    const file = path.join(fresh('p12'), 'org.p12');
    writeFileSync(file, p12);
    await expect(
      run('openssl', ['pkcs12', '-in', file, '-noout', '-passin', 'pass:pw']),
    ).resolves.toBeDefined();
  });

  it('open the legacy format (RC2-40 certificates, 3DES key) that OpenSSL 1.x writes and pkijs cannot decrypt', async () => {
    const folder = fresh('p12-legacy');
    await run(
      'bash',
      [
        '-c',
        [
          'set -e',
          'openssl req -x509 -newkey rsa:2048 -nodes -keyout key.pem -out cert.pem -days 2 -subj "/CN=Legacy Lab (invented)"',
          'openssl pkcs12 -export -legacy -inkey key.pem -in cert.pem -out legacy.p12 -passout pass:pw',
        ].join('\n'),
      ],
      { cwd: folder },
    );
    const info = await run(
      'openssl',
      ['pkcs12', '-legacy', '-info', '-noout', '-passin', 'pass:pw', '-in', 'legacy.p12'],
      {
        cwd: folder,
      },
    );
    expect(info.stderr).toContain('pbeWithSHA1And40BitRC2-CBC');
    const contents = readPkcs12(readFileSync(path.join(folder, 'legacy.p12')), 'pw');
    expect(contents.certificate.fingerprint256).toBe(
      new X509Certificate(readFileSync(path.join(folder, 'cert.pem'))).fingerprint256,
    );
    expect(contents.certificate.checkPrivateKey(contents.privateKey)).toBe(true);
  });
});
