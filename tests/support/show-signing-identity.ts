import { createHash, X509Certificate } from 'node:crypto';
import { loadSigningIdentity } from '../../server/features/signing/local-certificate-authority.ts';
import { signingConfigFromEnv } from '../../server/features/signing/signing-config.ts';

/**
 * `npx tsx tests/support/show-signing-identity.ts "<organisation name>"` prints, as JSON, which
 * certificate seals that organisation's PDFs — subject, SHA-256 fingerprints of it and of the CA,
 * expiry, source — creating the local CA on first use like the server does. It prints no key
 * material and no passphrase. The tests start several of these at once to show that concurrent
 * starts share one CA.
 */
const organisationName = process.argv[2] ?? 'Rateledger';
const identity = await loadSigningIdentity({ ...signingConfigFromEnv(), organisationName });
const ca = identity.caPem ? new X509Certificate(identity.caPem) : undefined;
process.stdout.write(
  `${JSON.stringify({
    subject: identity.subject,
    fingerprintSha256: identity.fingerprintSha256,
    caFingerprintSha256: ca?.fingerprint256 ?? null,
    caPemSha256: createHash('sha256').update(identity.caPem).digest('hex'),
    notAfter: identity.notAfter.toISOString(),
    source: identity.source,
  })}\n`,
);
