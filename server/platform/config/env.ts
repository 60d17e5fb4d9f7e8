import { z } from 'zod';

/**
 * The environment, parsed once at start-up. A missing or malformed variable stops the process
 * with one message naming every problem. `.env.example` documents each variable.
 */
const environmentSchema = z.object({
  NODE_ENV: z.enum(['development', 'production', 'test']).default('development'),
  DATABASE_URL: z.url({ message: 'DATABASE_URL must be a postgres:// URL' }),
  SESSION_SECRET: z.string().min(16, 'SESSION_SECRET must be at least 16 characters'),
  HOST: z.string().default('127.0.0.1'),
  PORT: z.coerce.number().int().min(0).max(65535).default(3000),
  /** Set when served over HTTPS (behind a TLS-terminating proxy): marks the cookie Secure. */
  COOKIE_SECURE: z
    .enum(['true', 'false'])
    .default('false')
    .transform((value) => value === 'true'),
  /** Sign-in attempts allowed per client address per 15 minutes. */
  SIGN_IN_RATE_LIMIT: z.coerce.number().int().min(1).default(20),
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
