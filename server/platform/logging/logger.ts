import pino from 'pino';

/**
 * The process's one structured logger (pino, JSON lines on stdout). Levels: `LOG_LEVEL` when set,
 * otherwise `silent` under tests and `info` elsewhere.
 *
 * What is never logged: request bodies (so no passwords, uploaded files or template text),
 * cookies, authorisation headers, and tokens in paths (requests are logged by their route
 * pattern, `/invitations/:token`, not the address typed). The redaction paths below are a second
 * line of defence for objects passed in by mistake.
 */
export const logger = pino({
  level: process.env.LOG_LEVEL ?? (process.env.NODE_ENV === 'test' ? 'silent' : 'info'),
  base: { service: 'rateledger', pid: process.pid },
  redact: {
    paths: [
      'password',
      '*.password',
      'token',
      '*.token',
      'secret',
      '*.secret',
      'headers.cookie',
      'headers.authorization',
      '*.headers.cookie',
      '*.headers.authorization',
      'body',
      '*.body',
    ],
    censor: '[not logged]',
  },
});

export type Logger = typeof logger;
