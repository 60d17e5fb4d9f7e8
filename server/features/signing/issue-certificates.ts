import { generateKeyPair, randomBytes } from 'node:crypto';
import { promisify } from 'node:util';
import forge from 'node-forge';

/**
 * Creates the certificates of the local certificate authority with node-forge:
 * - `createCertificateAuthority` — a self-signed CA certificate (basicConstraints cA:TRUE,
 *   critical; keyUsage keyCertSign + cRLSign, critical; subject key identifier);
 * - `issueSigningCertificate` — an organisation's signing certificate issued by that CA
 *   (basicConstraints cA:FALSE; keyUsage digitalSignature + nonRepudiation, critical; subject
 *   CN = organisation name, O = organisation name; authority key identifier of the CA).
 *   There is deliberately no extendedKeyUsage: NSS, which poppler's `pdfsig` uses, rejects a PDF
 *   signing certificate carrying `emailProtection` ("Unknown issue with Certificate").
 *
 * Keys are RSA 3072 (NIST SP 800-57 Part 1 Rev. 5, Table 2: 128-bit security, acceptable beyond
 * 2030), made by Node's native generator; signatures are sha256WithRSAEncryption. Serial numbers
 * are 16 random bytes, positive (RFC 5280 §4.1.2.2: unique, at most 20 octets).
 *
 * Reference: RFC 5280 §4.2.1.3 (keyUsage), §4.2.1.9 (basicConstraints), §4.2.1.1/4.2.1.2 (key
 * identifiers).
 *
 * Throws only on a failure of the key generator.
 *
 * Example: const ca = await createCertificateAuthority({ commonName: 'Rateledger local CA' });
 * ca.certificatePem starts with "-----BEGIN CERTIFICATE-----".
 */

export const RSA_MODULUS_BITS = 3072;
const CA_VALIDITY_YEARS = 20;
const SIGNER_VALIDITY_YEARS = 10;

export interface IssuedCertificate {
  certificatePem: string;
  /** The private key as unencrypted PKCS#8 PEM: callers encrypt it before it touches a disk. */
  privateKeyPem: string;
}

const generateRsaKeyPair = promisify(generateKeyPair);

async function rsaKeyPair(): Promise<{
  privateKey: forge.pki.rsa.PrivateKey;
  publicKey: forge.pki.rsa.PublicKey;
  privateKeyPem: string;
}> {
  const { privateKey } = await generateRsaKeyPair('rsa', {
    modulusLength: RSA_MODULUS_BITS,
    publicKeyEncoding: { type: 'spki', format: 'pem' },
    privateKeyEncoding: { type: 'pkcs8', format: 'pem' },
  });
  const forgeKey = forge.pki.privateKeyFromPem(privateKey) as forge.pki.rsa.PrivateKey;
  return {
    privateKey: forgeKey,
    publicKey: forge.pki.setRsaPublicKey(forgeKey.n, forgeKey.e),
    privateKeyPem: privateKey,
  };
}

function serialNumber(): string {
  const bytes = randomBytes(16);
  bytes[0] = (bytes[0] ?? 0) & 0x7f; // positive INTEGER
  bytes[0] = (bytes[0] ?? 0) | 0x01; // and no leading zero octet to strip
  return bytes.toString('hex');
}

function validity(certificate: forge.pki.Certificate, now: Date, years: number): void {
  const notBefore = new Date(now.getTime() - 5 * 60_000); // tolerate small clock differences
  const notAfter = new Date(now);
  notAfter.setUTCFullYear(notAfter.getUTCFullYear() + years);
  certificate.validity.notBefore = notBefore;
  certificate.validity.notAfter = notAfter;
}

export async function createCertificateAuthority(options: {
  commonName: string;
  organisation?: string;
  now?: Date;
}): Promise<IssuedCertificate> {
  const keys = await rsaKeyPair();
  const certificate = forge.pki.createCertificate();
  certificate.publicKey = keys.publicKey;
  certificate.serialNumber = serialNumber();
  validity(certificate, options.now ?? new Date(), CA_VALIDITY_YEARS);
  const subject = [
    { shortName: 'CN', value: options.commonName },
    { shortName: 'O', value: options.organisation ?? options.commonName },
  ];
  certificate.setSubject(subject);
  certificate.setIssuer(subject);
  certificate.setExtensions([
    { name: 'basicConstraints', cA: true, critical: true },
    { name: 'keyUsage', keyCertSign: true, cRLSign: true, critical: true },
    { name: 'subjectKeyIdentifier' },
  ]);
  certificate.sign(keys.privateKey, forge.md.sha256.create());
  return { certificatePem: forge.pki.certificateToPem(certificate), privateKeyPem: keys.privateKeyPem };
}

export async function issueSigningCertificate(options: {
  authority: IssuedCertificate;
  organisation: string;
  now?: Date;
}): Promise<IssuedCertificate> {
  const caCertificate = forge.pki.certificateFromPem(options.authority.certificatePem);
  const caKey = forge.pki.privateKeyFromPem(options.authority.privateKeyPem);
  const keys = await rsaKeyPair();
  const certificate = forge.pki.createCertificate();
  certificate.publicKey = keys.publicKey;
  certificate.serialNumber = serialNumber();
  validity(certificate, options.now ?? new Date(), SIGNER_VALIDITY_YEARS);
  certificate.setSubject([
    { shortName: 'CN', value: options.organisation },
    { shortName: 'O', value: options.organisation },
  ]);
  certificate.setIssuer(caCertificate.subject.attributes);
  certificate.setExtensions([
    { name: 'basicConstraints', cA: false, critical: true },
    { name: 'keyUsage', digitalSignature: true, nonRepudiation: true, critical: true },
    { name: 'subjectKeyIdentifier' },
    {
      name: 'authorityKeyIdentifier',
      keyIdentifier: caCertificate.generateSubjectKeyIdentifier().getBytes(),
    },
  ]);
  certificate.sign(caKey, forge.md.sha256.create());
  return { certificatePem: forge.pki.certificateToPem(certificate), privateKeyPem: keys.privateKeyPem };
}

/**
 * Packs a key and its certificate chain (leaf first) into a PKCS#12 file protected by
 * `passphrase` (PBES2 with AES-256-CBC for the key bag, as OpenSSL 3 writes by default).
 */
export function toPkcs12(
  privateKeyPem: string,
  certificatePems: string[],
  passphrase: string,
  friendlyName: string,
): Buffer {
  const key = forge.pki.privateKeyFromPem(privateKeyPem);
  const chain = certificatePems.map((pem) => forge.pki.certificateFromPem(pem));
  const asn1 = forge.pkcs12.toPkcs12Asn1(key, chain, passphrase, {
    algorithm: 'aes256',
    friendlyName,
    count: 10_000,
  });
  return Buffer.from(forge.asn1.toDer(asn1).getBytes(), 'binary');
}
