import { createPrivateKey, type KeyObject, X509Certificate } from 'node:crypto';
import forge from 'node-forge';

/**
 * PKCS#12 (.p12/.pfx) files in and out, with node-forge — the one library for keys,
 * certificates and their files here (`issue-certificates.ts` makes the certificates with it
 * too). pkijs, which the seal itself needs (`pades-signer.ts` says why), could write these files
 * but cannot read every file a laboratory brings:
 * - A laboratory's own certificate (`SIGNING_P12_PATH`) may come in the legacy format:
 *   certificates encrypted with pbeWithSHAAnd40BitRC2-CBC and the key with
 *   pbeWithSHAAnd3-KeyTripleDES-CBC (RFC 7292 Appendix C), what OpenSSL 1.x writes by default
 *   and OpenSSL 3 with `pkcs12 -export -legacy` (tested in local-certificate-authority.test.ts).
 *   pkijs 4 decrypts PBES2 only (it refuses OID 1.2.840.113549.1.12.1.6 as an unknown
 *   "contentEncryptionAlgorithm"), WebCrypto has neither RC2 nor 3DES, and Node's OpenSSL 3
 *   offers RC2 only with the legacy provider, which Node does not load. node-forge implements
 *   both ciphers and the PKCS#12 key derivation.
 * - Writing stays with the reader, so the local CA's files are opened by the code that made them.
 *
 * `readPkcs12` returns the private key and the certificates, the signing certificate (the one
 * whose public key matches the key) first, then the rest of the chain. RSA and EC keys are both
 * read: node-forge decrypts the bags (OpenSSL 3's default PBES2/AES and the legacy 3DES/RC2
 * formats); keys and certificates it cannot model itself (EC) it hands over as raw ASN.1, which
 * Node's crypto then reads, and the RSA ones it models it writes out again from its model — the
 * certificates `issue-certificates.ts` makes come back byte for byte (tested).
 * `writePkcs12` packs an RSA key and its chain (leaf first): the key bag encrypted with PBES2
 * (PBKDF2-HMAC-SHA-1, 10 000 iterations, AES-256-CBC), the certificates (public) unencrypted,
 * the whole under an HMAC-SHA-1 integrity check — node-forge's format, which `openssl pkcs12`
 * also opens (tested).
 *
 * Reference: RFC 7292 (PKCS #12 v1.1) §4.2 (SafeBag types), Appendix B (key derivation).
 *
 * Throws `Error('… passphrase …')` when the file cannot be opened with the passphrase or is not
 * a PKCS#12 file, and when it holds no key or no certificate for the key.
 *
 * Example: readPkcs12(readFileSync('signer.p12'), 'secret').certificate.subject → "CN=Org\nO=Org".
 */

export interface Pkcs12Contents {
  privateKey: KeyObject;
  /** The certificate belonging to the private key. */
  certificate: X509Certificate;
  /** The other certificates of the file (issuers), in file order. */
  chain: X509Certificate[];
}

const binary = (bytes: string) => Buffer.from(bytes, 'binary');

export function readPkcs12(p12: Uint8Array, passphrase: string): Pkcs12Contents {
  let store: forge.pkcs12.Pkcs12Pfx;
  try {
    const asn1 = forge.asn1.fromDer(forge.util.createBuffer(Buffer.from(p12).toString('binary')));
    store = forge.pkcs12.pkcs12FromAsn1(asn1, false, passphrase);
  } catch (error) {
    throw new Error(
      `The PKCS#12 file cannot be opened: either it is not a PKCS#12 file or the passphrase is wrong (${(error as Error).message}).`,
    );
  }
  const keyBags = [
    ...(store.getBags({ bagType: forge.pki.oids.pkcs8ShroudedKeyBag })[
      forge.pki.oids.pkcs8ShroudedKeyBag ?? ''
    ] ?? []),
    ...(store.getBags({ bagType: forge.pki.oids.keyBag })[forge.pki.oids.keyBag ?? ''] ?? []),
  ];
  const keys = keyBags.map((bag) => {
    const info = bag.key
      ? forge.pki.wrapRsaPrivateKey(forge.pki.privateKeyToAsn1(bag.key))
      : (bag as unknown as { asn1: forge.asn1.Asn1 }).asn1;
    return createPrivateKey({ key: binary(forge.asn1.toDer(info).getBytes()), format: 'der', type: 'pkcs8' });
  });
  const certificates = (
    store.getBags({ bagType: forge.pki.oids.certBag })[forge.pki.oids.certBag ?? ''] ?? []
  ).map((bag) => {
    const asn1 = bag.cert
      ? forge.pki.certificateToAsn1(bag.cert)
      : (bag as unknown as { asn1: forge.asn1.Asn1 }).asn1;
    return new X509Certificate(binary(forge.asn1.toDer(asn1).getBytes()));
  });
  const privateKey = keys[0];
  if (!privateKey) throw new Error('The PKCS#12 file holds no private key.');
  const certificate = certificates.find((candidate) => candidate.checkPrivateKey(privateKey));
  if (!certificate) throw new Error('The PKCS#12 file holds no certificate for its private key.');
  return { privateKey, certificate, chain: certificates.filter((candidate) => candidate !== certificate) };
}

/** Packs a key and its certificate chain (leaf first) into a PKCS#12 file protected by `passphrase`. */
export function writePkcs12(
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
