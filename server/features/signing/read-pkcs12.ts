import { createPrivateKey, type KeyObject, X509Certificate } from 'node:crypto';
import forge from 'node-forge';

/**
 * Opens a PKCS#12 (.p12/.pfx) file: the private key and the certificates in it, the signing
 * certificate (the one whose public key matches the key) first, then the rest of the chain.
 * RSA and EC keys are both read: node-forge decrypts the bags (OpenSSL 3's default PBES2/AES and
 * the legacy 3DES/RC2 formats) and hands over keys and certificates it cannot model itself as
 * raw ASN.1, which Node's crypto then reads.
 *
 * Reference: RFC 7292 (PKCS #12 v1.1) §4.2 (SafeBag types).
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
