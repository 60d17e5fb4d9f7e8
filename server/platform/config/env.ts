import { z } from 'zod';
import { trustProxySchema } from './trust-proxy.ts';

/**
 * The environment, parsed once at start-up. A missing or malformed variable stops the process
 * with one message naming every problem. `.env.example` documents each variable.
 */
const environmentSchema = z
  .object({
    NODE_ENV: z.enum(['development', 'production', 'test']).default('development'),
    DATABASE_URL: z.url({ message: 'DATABASE_URL must be a postgres:// URL' }),
    SESSION_SECRET: z.string().min(16, 'SESSION_SECRET must be at least 16 characters'),
    HOST: z.string().default('127.0.0.1'),
    PORT: z.coerce.number().int().min(0).max(65535).default(3000),
    /**
     * Marks the cookies Secure. They are Secure whenever PUBLIC_URL is https; this forces it for
     * an https site whose PUBLIC_URL is left unset.
     */
    COOKIE_SECURE: z
      .enum(['true', 'false'])
      .default('false')
      .transform((value) => value === 'true'),
    /** The address people open the app at (the mail settings read it too). */
    PUBLIC_URL: z.string().optional(),
    /** Which proxies' X-Forwarded-* headers to believe (`trust-proxy.ts`); none by default. */
    TRUST_PROXY: trustProxySchema,
    /** Sign-in attempts allowed per client address per 15 minutes. */
    SIGN_IN_RATE_LIMIT: z.coerce.number().int().min(1).default(20),
  })
  .transform(({ COOKIE_SECURE, PUBLIC_URL, ...rest }) => ({
    ...rest,
    PUBLIC_URL,
    COOKIE_SECURE: COOKIE_SECURE || /^https:/i.test(PUBLIC_URL?.trim() ?? ''),
  }))
  .superRefine((environment, context) => {
    // The app itself speaks plain HTTP: an https site means a TLS-terminating proxy, and only a
    // trusted proxy's X-Forwarded-Proto tells the app the request was secure. Without it,
    // express-session never sends a Secure cookie and nobody could stay signed in.
    if (environment.COOKIE_SECURE && environment.TRUST_PROXY === false)
      context.addIssue({
        code: 'custom',
        path: ['TRUST_PROXY'],
        message:
          'the site is served over https (PUBLIC_URL or COOKIE_SECURE) but TRUST_PROXY is not set: name the TLS proxy in front of the app (e.g. loopback, its address, or 1)',
      });
  });

export type Environment = z.infer<typeof environmentSchema>;

export function parseEnvironment(source: NodeJS.ProcessEnv = process.env): Environment {
  const result = environmentSchema.safeParse(source);
  if (!result.success) {
    const problems = result.error.issues.map((issue) => `  ${issue.path.join('.')}: ${issue.message}`);
    throw new Error(`Rateledger cannot start; fix the environment:\n${problems.join('\n')}`);
  }
  return result.data;
}
