import { generateKeyPair, randomBytes } from 'node:crypto';
import { promisify } from 'node:util';
import forge from 'node-forge';

/**
 * Creates the certificates of the local certificate authority with node-forge, the library that
 * also packs and opens the PKCS#12 files they travel in (`pkcs12.ts`, which says why it is
 * node-forge):
 * - `createCertificateAuthority` — a self-signed CA certificate (basicConstraints cA:TRUE,
 *   critical; keyUsage keyCertSign + cRLSign, critical; subject key identifier);
 * - `issueSigningCertificate` — an organisation's signing certificate issued by that CA
 *   (basicConstraints cA:FALSE; keyUsage digitalSignature + nonRepudiation, critical; subject
 *   CN = organisation name, O = organisation name; authority key identifier of the CA).
 *   There is deliberately no extendedKeyUsage: NSS, which poppler's `pdfsig` uses, rejects a PDF
 *   signing certificate carrying `emailProtection` ("Unknown issue with Certificate").
 *
 * Keys are RSA 3072 (NIST SP 800-57 Part 1 Rev. 5, Table 2: 128-bit security, acceptable beyond
 * 2030), made by Node's native generator; signatures are sha256WithRSAEncryption with NULL
 * parameters (RFC 4055 §5). Serial numbers are 16 random bytes, positive (RFC 5280 §4.1.2.2:
 * unique, at most 20 octets). Names are UTF8String (RFC 5280 §4.1.2.4), so an organisation
 * name outside ASCII is written as it is spelt; validity dates are UTCTime up to 2049 and
 * GeneralizedTime from 2050 (§4.1.2.5); key identifiers are the SHA-1 of the subject public key
 * bits (§4.2.1.2, method 1).
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

function setValidity(certificate: forge.pki.Certificate, now: Date, years: number): void {
  const notBefore = new Date(now.getTime() - 5 * 60_000); // tolerate small clock differences
  const notAfter = new Date(now);
  notAfter.setUTCFullYear(notAfter.getUTCFullYear() + years);
  certificate.validity.notBefore = notBefore;
  certificate.validity.notAfter = notAfter;
}

/** CN then O, as UTF8String (node-forge writes PrintableString unless told otherwise). */
const UTF8 = forge.asn1.Type.UTF8 as unknown as forge.asn1.Class;
const name = (commonName: string, organisation: string): forge.pki.CertificateField[] => [
  { shortName: 'CN', value: commonName, valueTagClass: UTF8 },
  { shortName: 'O', value: organisation, valueTagClass: UTF8 },
];

/**
 * The CA's subject, to be written as the issuer of what it signs: node-forge reads a UTF8String
 * as its raw bytes but encodes the value it writes, so the bytes are decoded first, and the name
 * comes out byte for byte as in the CA certificate (RFC 5280 §7.1 compares names that way).
 */
const issuerName = (authority: forge.pki.Certificate): forge.pki.CertificateField[] =>
  authority.subject.attributes.map((field) =>
    field.valueTagClass === UTF8 ? { ...field, value: forge.util.decodeUtf8(String(field.value)) } : field,
  );

export async function createCertificateAuthority(options: {
  commonName: string;
  organisation?: string;
  now?: Date;
}): Promise<IssuedCertificate> {
  const keys = await rsaKeyPair();
  const certificate = forge.pki.createCertificate();
  certificate.publicKey = keys.publicKey;
  certificate.serialNumber = serialNumber();
  setValidity(certificate, options.now ?? new Date(), CA_VALIDITY_YEARS);
  const subject = name(options.commonName, options.organisation ?? options.commonName);
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
  setValidity(certificate, options.now ?? new Date(), SIGNER_VALIDITY_YEARS);
  certificate.setSubject(name(options.organisation, options.organisation));
  certificate.setIssuer(issuerName(caCertificate));
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
