import { createHash, type KeyObject, webcrypto, type X509Certificate } from 'node:crypto';
import { Signer } from '@signpdf/utils';
import * as asn1js from 'asn1js';
import * as pkijs from 'pkijs';
import { pkijsEngine as engine, toArrayBuffer } from './pkijs-engine.ts';

/**
 * A CMS signer for PDF signatures at the PAdES baseline level B-B (ETSI EN 319 142-1 §6.3):
 * a detached SignedData (encapsulated content type id-data, no content) whose signed attributes
 * are exactly
 * - content-type = id-data,
 * - message-digest = SHA-256 of the signed byte ranges of the PDF,
 * - signing-certificate-v2 (ESS, RFC 5035) = the SHA-256 hash of the signing certificate and its
 *   issuer and serial number, which binds the signature to that one certificate so it cannot be
 *   swapped for another certificate with the same key;
 * and no CMS signing-time attribute — PAdES puts the claimed signing time in the signature
 * dictionary's /M entry instead. The signature is RSASSA-PKCS1-v1_5 or ECDSA with SHA-256; the
 * signing certificate and its issuers are embedded so a verifier can build the chain.
 *
 * @signpdf's own P12Signer makes a CMS with node-forge that lacks signing-certificate-v2, which
 * is only "ETSI subfilter", not B-B. This class plugs into `SignPdf.sign()` the same way.
 *
 * Why pkijs here, when node-forge makes the certificates and PKCS#12 files (`pkcs12.ts`): the
 * PKCS#7 of node-forge 1.4 writes only three signed attributes (content-type, message-digest,
 * signing-time: any other, such as signing-certificate-v2, comes out without a value), signs
 * with RSA keys only (a laboratory's certificate may be EC), and cannot verify a signature
 * ("PKCS#7 signature verification not yet implemented"), which `check-signature-contents.ts`
 * needs. pkijs (with asn1js, its ASN.1 layer) does all three on Node's WebCrypto.
 *
 * Reference: RFC 5652 (CMS) §5.3–5.4; RFC 5035 §3 (SigningCertificateV2, ESSCertIDv2 with the
 * default hash algorithm SHA-256 left out); ETSI EN 319 142-1 V1.1.1 §5.2 and §6.3.
 *
 * Throws from `sign` when the key type is neither RSA nor EC P-256/P-384/P-521.
 *
 * Example: await new SignPdf().sign(pdfWithPlaceholder, new PadesSigner({ privateKey,
 * certificate, chain: [ca] })) resolves to the signed PDF bytes.
 */

const OID = {
  data: '1.2.840.113549.1.7.1',
  signedData: '1.2.840.113549.1.7.2',
  contentType: '1.2.840.113549.1.9.3',
  messageDigest: '1.2.840.113549.1.9.4',
  signingCertificateV2: '1.2.840.113549.1.9.16.2.47',
} as const;

const CURVES: Record<string, string> = { prime256v1: 'P-256', secp384r1: 'P-384', secp521r1: 'P-521' };

function webCryptoAlgorithm(key: KeyObject): RsaHashedImportParams | EcKeyImportParams {
  if (key.asymmetricKeyType === 'rsa') return { name: 'RSASSA-PKCS1-v1_5', hash: 'SHA-256' };
  const curve =
    key.asymmetricKeyType === 'ec' ? CURVES[key.asymmetricKeyDetails?.namedCurve ?? ''] : undefined;
  if (curve) return { name: 'ECDSA', namedCurve: curve };
  throw new Error(
    `A ${key.asymmetricKeyType ?? 'unknown'} key cannot make a PDF seal; use RSA or EC P-256/P-384/P-521.`,
  );
}

const pkijsCertificate = (certificate: X509Certificate) =>
  pkijs.Certificate.fromBER(toArrayBuffer(certificate.raw));

export interface PadesSignerOptions {
  privateKey: KeyObject;
  certificate: X509Certificate;
  chain: X509Certificate[];
}

export class PadesSigner extends Signer {
  constructor(private readonly options: PadesSignerOptions) {
    super();
  }

  override async sign(signedBytes: Buffer): Promise<Buffer> {
    const { privateKey, certificate, chain } = this.options;
    const algorithm = webCryptoAlgorithm(privateKey);
    const cryptoKey = await webcrypto.subtle.importKey(
      'pkcs8',
      privateKey.export({ type: 'pkcs8', format: 'der' }),
      algorithm,
      false,
      ['sign'],
    );
    const leaf = pkijsCertificate(certificate);
    const essCertIdV2 = new asn1js.Sequence({
      value: [
        new asn1js.OctetString({
          valueHex: toArrayBuffer(createHash('sha256').update(certificate.raw).digest()),
        }),
        new pkijs.IssuerSerial({
          issuer: new pkijs.GeneralNames({ names: [new pkijs.GeneralName({ type: 4, value: leaf.issuer })] }),
          serialNumber: leaf.serialNumber,
        }).toSchema(),
      ],
    });
    const signingCertificateV2 = new asn1js.Sequence({
      value: [new asn1js.Sequence({ value: [essCertIdV2] })],
    });
    const digest = createHash('sha256').update(signedBytes).digest();
    const signedData = new pkijs.SignedData({
      version: 1,
      encapContentInfo: new pkijs.EncapsulatedContentInfo({ eContentType: OID.data }),
      signerInfos: [
        new pkijs.SignerInfo({
          version: 1,
          sid: new pkijs.IssuerAndSerialNumber({ issuer: leaf.issuer, serialNumber: leaf.serialNumber }),
          signedAttrs: new pkijs.SignedAndUnsignedAttributes({
            type: 0,
            attributes: [
              new pkijs.Attribute({
                type: OID.contentType,
                values: [new asn1js.ObjectIdentifier({ value: OID.data })],
              }),
              new pkijs.Attribute({
                type: OID.messageDigest,
                values: [new asn1js.OctetString({ valueHex: toArrayBuffer(digest) })],
              }),
              new pkijs.Attribute({ type: OID.signingCertificateV2, values: [signingCertificateV2] }),
            ],
          }),
        }),
      ],
      certificates: [leaf, ...chain.map(pkijsCertificate)],
    });
    await signedData.sign(cryptoKey, 0, 'SHA-256', undefined, engine);
    const contentInfo = new pkijs.ContentInfo({
      contentType: OID.signedData,
      content: signedData.toSchema(true),
    });
    return Buffer.from(contentInfo.toSchema().toBER(false));
  }
}
