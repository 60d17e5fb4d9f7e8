import path from 'node:path';
import { z } from 'zod';

/**
 * Where the PDF seal gets its certificate, read once from the environment.
 *
 * Two modes:
 * - **local certificate authority** (the default): a private CA and one signing certificate per
 *   organisation are created on first use in `SIGNING_DIR` (default `.data/signing`) and reused —
 *   a stand-in for a hosted signing or certificate service, good for a demo or a closed system
 *   whose users trust the CA certificate explicitly;
 * - **configured certificate**: `SIGNING_P12_PATH` names a PKCS#12 file (key + certificate, and
 *   usually its chain) issued by a real CA, opened with `SIGNING_P12_PASSPHRASE`; `SIGNING_CA_PEM`
 *   optionally names the PEM file of the CA certificate(s) verification should trust.
 *
 * `SIGNING_P12_PASSPHRASE` also protects the local CA's files when set; otherwise a random
 * passphrase is kept in `SIGNING_DIR/passphrase` (permissions 0600).
 *
 * Throws an Error naming each problem when a variable is malformed (for example a passphrase
 * given without the file it opens is fine, a P12 path without a passphrase is not).
 *
 * Example: signingConfigFromEnv({}) → { signingDir: '<cwd>/.data/signing', p12Path: undefined, … }.
 */

export interface SigningConfig {
  /** Directory for the local CA, the organisation certificates and cached NSS trust stores. */
  signingDir: string;
  /** A configured PKCS#12 file used instead of the local CA. */
  p12Path?: string;
  /** Passphrase of `p12Path`, or of the local CA's files when set. */
  passphrase?: string;
  /** PEM file of the CA certificate(s) to trust when verifying (configured mode). */
  caPemPath?: string;
}

const environmentSchema = z
  .object({
    SIGNING_DIR: z.string().min(1).optional(),
    SIGNING_P12_PATH: z.string().min(1).optional(),
    SIGNING_P12_PASSPHRASE: z.string().min(1).optional(),
    SIGNING_CA_PEM: z.string().min(1).optional(),
  })
  .refine((env) => !env.SIGNING_P12_PATH || env.SIGNING_P12_PASSPHRASE, {
    message: 'SIGNING_P12_PASSPHRASE must be set when SIGNING_P12_PATH is',
    path: ['SIGNING_P12_PASSPHRASE'],
  });

export const DEFAULT_SIGNING_DIR = path.join('.data', 'signing');

export function signingConfigFromEnv(
  source: NodeJS.ProcessEnv = process.env,
  cwd = process.cwd(),
): SigningConfig {
  const result = environmentSchema.safeParse(source);
  if (!result.success) {
    const problems = result.error.issues.map((issue) => `  ${issue.path.join('.')}: ${issue.message}`);
    throw new Error(`The signing configuration is not usable:\n${problems.join('\n')}`);
  }
  const env = result.data;
  return {
    signingDir: path.resolve(cwd, env.SIGNING_DIR ?? DEFAULT_SIGNING_DIR),
    p12Path: env.SIGNING_P12_PATH ? path.resolve(cwd, env.SIGNING_P12_PATH) : undefined,
    passphrase: env.SIGNING_P12_PASSPHRASE,
    caPemPath: env.SIGNING_CA_PEM ? path.resolve(cwd, env.SIGNING_CA_PEM) : undefined,
  };
}
