import { isIP } from 'node:net';
import { z } from 'zod';

/**
 * Express's `trust proxy` as TRUST_PROXY sets it: which proxies' X-Forwarded-For and
 * X-Forwarded-Proto to believe. Unset (or `false`), none: the client's address is the socket's,
 * so nobody can pick their own address to dodge the per-address sign-in limits. Otherwise the
 * number of proxies in front of the app (`1`), or the proxies themselves: addresses, CIDR ranges
 * and Express's names `loopback`, `linklocal`, `uniquelocal`, separated by commas. `true` is
 * refused: it would believe whatever address a client writes into the header.
 */
export type TrustProxy = false | number | string[];

const NAMES = new Set(['loopback', 'linklocal', 'uniquelocal']);

function isProxyEntry(entry: string): boolean {
  if (NAMES.has(entry)) return true;
  const [address = '', bits, ...rest] = entry.split('/');
  const family = isIP(address);
  if (family === 0 || rest.length > 0) return false;
  if (bits === undefined) return true;
  const prefix = Number(bits);
  return /^\d{1,3}$/.test(bits) && prefix <= (family === 4 ? 32 : 128);
}

export const trustProxySchema = z
  .string()
  .optional()
  .transform((value, context): TrustProxy => {
    const text = value?.trim() ?? '';
    if (text === '' || text === 'false') return false;
    if (text === 'true') {
      context.addIssue({
        code: 'custom',
        message:
          'TRUST_PROXY=true would believe any X-Forwarded-For; name the proxy (loopback, an address or CIDR range) or the number of proxies in front of the app',
      });
      return z.NEVER;
    }
    if (/^\d+$/.test(text)) return Number(text) === 0 ? false : Number(text);
    const entries = text.split(',').map((entry) => entry.trim());
    const wrong = entries.filter((entry) => !isProxyEntry(entry));
    if (wrong.length > 0) {
      context.addIssue({
        code: 'custom',
        message: `TRUST_PROXY: not an address, CIDR range, hop count or one of loopback, linklocal, uniquelocal: ${wrong.join(', ')}`,
      });
      return z.NEVER;
    }
    return entries;
  });
