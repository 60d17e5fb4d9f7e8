import {
  createHash,
  createPrivateKey,
  generateKeyPair,
  randomBytes,
  webcrypto,
  X509Certificate,
} from 'node:crypto';
import { promisify } from 'node:util';
import * as asn1js from 'asn1js';
import * as pkijs from 'pkijs';
import { toArrayBuffer } from './pkijs-engine.ts';

/**
 * Creates the certificates of the local certificate authority with pkijs:
 * - `createCertificateAuthority` — a self-signed CA certificate (basicConstraints cA:TRUE,
 *   critical; keyUsage keyCertSign + cRLSign, critical; subject key identifier);
 * - `issueSigningCertificate` — an organisation's signing certificate issued by that CA
 *   (basicConstraints cA:FALSE; keyUsage digitalSignature + nonRepudiation, critical; subject
 *   CN = organisation name, O = organisation name; authority key identifier of the CA).
 *   There is deliberately no extendedKeyUsage: NSS, which poppler's `pdfsig` uses, rejects a PDF
 *   signing certificate carrying `emailProtection` ("Unknown issue with Certificate").
 *
 * Keys are RSA 3072 (NIST SP 800-57 Part 1 Rev. 5, Table 2: 128-bit security, acceptable beyond
 * 2030), made by Node's native generator; signatures are sha256WithRSAEncryption, made by Node's
 * WebCrypto over the certificate pkijs encodes. Serial numbers are 16 random bytes, positive (RFC 5280 §4.1.2.2: unique, at most 20
 * octets). Names are UTF8String (RFC 5280 §4.1.2.4); validity dates are UTCTime up to 2049 and
 * GeneralizedTime from 2050 (§4.1.2.5); key identifiers are the SHA-1 of the subject public key
 * bits (§4.2.1.2, method 1).
 *
 * Reference: RFC 5280 §4.2.1.3 (keyUsage), §4.2.1.9 (basicConstraints), §4.2.1.1/4.2.1.2 (key
 * identifiers).
 *
 * Throws only on a failure of the key generator or of WebCrypto.
 *
 * Example: const ca = await createCertificateAuthority({ commonName: 'Rateledger local CA' });
 * ca.certificatePem starts with "-----BEGIN CERTIFICATE-----".
 */

export const RSA_MODULUS_BITS = 3072;
const CA_VALIDITY_YEARS = 20;
const SIGNER_VALIDITY_YEARS = 10;
const SIGNING_ALGORITHM = { name: 'RSASSA-PKCS1-v1_5', hash: 'SHA-256' } as const;

const OID = {
  commonName: '2.5.4.3',
  organizationName: '2.5.4.10',
  subjectKeyIdentifier: '2.5.29.14',
  keyUsage: '2.5.29.15',
  basicConstraints: '2.5.29.19',
  authorityKeyIdentifier: '2.5.29.35',
  sha256WithRsaEncryption: '1.2.840.113549.1.1.11',
} as const;

/** KeyUsage bit numbers (RFC 5280 §4.2.1.3). */
const KEY_USAGE = { digitalSignature: 0, nonRepudiation: 1, keyCertSign: 5, cRLSign: 6 } as const;

export interface IssuedCertificate {
  certificatePem: string;
  /** The private key as unencrypted PKCS#8 PEM: callers encrypt it before it touches a disk. */
  privateKeyPem: string;
}

const generateRsaKeyPair = promisify(generateKeyPair);

async function rsaKeyPair(): Promise<{ publicKeyInfo: pkijs.PublicKeyInfo; privateKeyPem: string }> {
  const { publicKey, privateKey } = await generateRsaKeyPair('rsa', {
    modulusLength: RSA_MODULUS_BITS,
    publicKeyEncoding: { type: 'spki', format: 'der' },
    privateKeyEncoding: { type: 'pkcs8', format: 'pem' },
  });
  return { publicKeyInfo: pkijs.PublicKeyInfo.fromBER(toArrayBuffer(publicKey)), privateKeyPem: privateKey };
}

const signingKey = (privateKeyPem: string) =>
  webcrypto.subtle.importKey(
    'pkcs8',
    createPrivateKey(privateKeyPem).export({ type: 'pkcs8', format: 'der' }),
    SIGNING_ALGORITHM,
    false,
    ['sign'],
  );

function serialNumber(): asn1js.Integer {
  const bytes = randomBytes(16);
  bytes[0] = (bytes[0] ?? 0) & 0x7f; // positive INTEGER
  bytes[0] = (bytes[0] ?? 0) | 0x01; // and no leading zero octet to strip
  return new asn1js.Integer({ valueHex: toArrayBuffer(bytes) });
}

const time = (date: Date) =>
  new pkijs.Time({
    type: date.getUTCFullYear() < 2050 ? pkijs.TimeType.UTCTime : pkijs.TimeType.GeneralizedTime,
    value: date,
  });

function setValidity(certificate: pkijs.Certificate, now: Date, years: number): void {
  const notBefore = new Date(now.getTime() - 5 * 60_000); // tolerate small clock differences
  const notAfter = new Date(now);
  notAfter.setUTCFullYear(notAfter.getUTCFullYear() + years);
  certificate.notBefore = time(notBefore);
  certificate.notAfter = time(notAfter);
}

/**
 * CN then O, each in an RDN of its own ("CN = …, O = …"). Built as DER and read back, because
 * pkijs writes the attributes of a name it assembled into one multi-valued RDN ("CN = … + O = …").
 */
function name(commonName: string, organisation: string): pkijs.RelativeDistinguishedNames {
  const rdn = (type: string, value: string) =>
    new asn1js.Set({
      value: [new pkijs.AttributeTypeAndValue({ type, value: new asn1js.Utf8String({ value }) }).toSchema()],
    });
  const sequence = new asn1js.Sequence({
    value: [rdn(OID.commonName, commonName), rdn(OID.organizationName, organisation)],
  });
  return pkijs.RelativeDistinguishedNames.fromBER(sequence.toBER(false));
}

/** A KeyUsage BIT STRING in DER: bit 0 is the most significant, trailing zero bits left out. */
function keyUsage(...bits: number[]): asn1js.BitString {
  const byte = bits.reduce((value, bit) => value | (0x80 >> bit), 0);
  return new asn1js.BitString({ valueHex: Uint8Array.of(byte).buffer, unusedBits: 7 - Math.max(...bits) });
}

const extension = (extnID: string, critical: boolean, value: asn1js.BaseBlock) =>
  new pkijs.Extension({ extnID, critical, extnValue: value.toBER(false) });

/** SHA-1 of the subjectPublicKey BIT STRING's contents (RFC 5280 §4.2.1.2, method 1). */
const keyIdentifier = (publicKeyInfo: pkijs.PublicKeyInfo) =>
  createHash('sha1').update(publicKeyInfo.subjectPublicKey.valueBlock.valueHexView).digest();

/** The CA's own subject key identifier, or one computed from its key when it has none. */
function authorityKeyIdentifier(authority: pkijs.Certificate): Buffer {
  const stored = authority.extensions?.find((item) => item.extnID === OID.subjectKeyIdentifier);
  return stored?.parsedValue instanceof asn1js.OctetString
    ? Buffer.from(stored.parsedValue.valueBlock.valueHexView)
    : keyIdentifier(authority.subjectPublicKeyInfo);
}

/**
 * Signs with sha256WithRSAEncryption whose parameters are NULL, as RFC 4055 §5 requires.
 * pkijs's own `Certificate.sign` leaves the NULL out; node-forge, which packs and reads the
 * PKCS#12 files, then writes it in, and the certificate no longer matches its signature.
 */
async function signedPem(certificate: pkijs.Certificate, issuerKeyPem: string): Promise<string> {
  const algorithm = new pkijs.AlgorithmIdentifier({
    algorithmId: OID.sha256WithRsaEncryption,
    algorithmParams: new asn1js.Null(),
  });
  certificate.signature = algorithm;
  certificate.signatureAlgorithm = algorithm;
  certificate.tbsView = new Uint8Array(certificate.encodeTBS().toBER(false));
  const signature = await webcrypto.subtle.sign(
    SIGNING_ALGORITHM,
    await signingKey(issuerKeyPem),
    certificate.tbsView,
  );
  certificate.signatureValue = new asn1js.BitString({ valueHex: signature });
  return new X509Certificate(Buffer.from(certificate.toSchema().toBER(false))).toString();
}

export async function createCertificateAuthority(options: {
  commonName: string;
  organisation?: string;
  now?: Date;
}): Promise<IssuedCertificate> {
  const keys = await rsaKeyPair();
  const certificate = new pkijs.Certificate({
    version: 2,
    serialNumber: serialNumber(),
    subjectPublicKeyInfo: keys.publicKeyInfo,
  });
  setValidity(certificate, options.now ?? new Date(), CA_VALIDITY_YEARS);
  certificate.subject = name(options.commonName, options.organisation ?? options.commonName);
  certificate.issuer = name(options.commonName, options.organisation ?? options.commonName);
  certificate.extensions = [
    extension(OID.basicConstraints, true, new pkijs.BasicConstraints({ cA: true }).toSchema()),
    extension(OID.keyUsage, true, keyUsage(KEY_USAGE.keyCertSign, KEY_USAGE.cRLSign)),
    extension(
      OID.subjectKeyIdentifier,
      false,
      new asn1js.OctetString({ valueHex: toArrayBuffer(keyIdentifier(keys.publicKeyInfo)) }),
    ),
  ];
  return {
    certificatePem: await signedPem(certificate, keys.privateKeyPem),
    privateKeyPem: keys.privateKeyPem,
  };
}

export async function issueSigningCertificate(options: {
  authority: IssuedCertificate;
  organisation: string;
  now?: Date;
}): Promise<IssuedCertificate> {
  const authority = pkijs.Certificate.fromBER(
    toArrayBuffer(new X509Certificate(options.authority.certificatePem).raw),
  );
  const keys = await rsaKeyPair();
  const certificate = new pkijs.Certificate({
    version: 2,
    serialNumber: serialNumber(),
    subjectPublicKeyInfo: keys.publicKeyInfo,
    issuer: authority.subject, // keeps the CA's name byte for byte
    subject: name(options.organisation, options.organisation),
  });
  setValidity(certificate, options.now ?? new Date(), SIGNER_VALIDITY_YEARS);
  certificate.extensions = [
    extension(OID.basicConstraints, true, new pkijs.BasicConstraints({ cA: false }).toSchema()),
    extension(OID.keyUsage, true, keyUsage(KEY_USAGE.digitalSignature, KEY_USAGE.nonRepudiation)),
    extension(
      OID.subjectKeyIdentifier,
      false,
      new asn1js.OctetString({ valueHex: toArrayBuffer(keyIdentifier(keys.publicKeyInfo)) }),
    ),
    extension(
      OID.authorityKeyIdentifier,
      false,
      new pkijs.AuthorityKeyIdentifier({
        keyIdentifier: new asn1js.OctetString({ valueHex: toArrayBuffer(authorityKeyIdentifier(authority)) }),
      }).toSchema(),
    ),
  ];
  return {
    certificatePem: await signedPem(certificate, options.authority.privateKeyPem),
    privateKeyPem: keys.privateKeyPem,
  };
}
