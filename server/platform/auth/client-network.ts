import { isIPv4, isIPv6 } from 'node:net';

/**
 * The part of a client's address that one party controls, as sign-in throttling counts it: an
 * IPv4 address as it is (also when IPv4-mapped, `::ffff:192.0.2.1`), an IPv6 address by its /64
 * prefix — one subscriber usually gets a whole /64 (RFC 6177), so counting single IPv6 addresses
 * would hand an attacker 2^64 fresh ones. Which address the request came from is decided by
 * Express (`req.ip`), so it honours `trust proxy` (TRUST_PROXY) and nothing else.
 *
 * Example: `clientNetwork('2001:db8:1:2:aa:bb:cc:dd')` → `'2001:db8:1:2::/64'`.
 */
export function clientNetwork(ip: string | undefined): string {
  if (!ip) return 'unknown';
  const bare = ip.replace(/%.*$/, '');
  const mapped = /^::ffff:(\d{1,3}(?:\.\d{1,3}){3})$/i.exec(bare);
  if (mapped) return mapped[1]!;
  if (isIPv4(bare)) return bare;
  if (!isIPv6(bare)) return bare.slice(0, 100);
  const [head = '', tail] = bare.toLowerCase().split('::');
  const headGroups = head ? head.split(':') : [];
  const tailGroups = tail === undefined ? [] : tail ? tail.split(':') : [];
  const missing = 8 - headGroups.length - tailGroups.length;
  const groups = [...headGroups, ...Array<string>(Math.max(missing, 0)).fill('0'), ...tailGroups];
  return `${groups
    .slice(0, 4)
    .map((group) => group.replace(/^0+(?=.)/, ''))
    .join(':')}::/64`;
}
