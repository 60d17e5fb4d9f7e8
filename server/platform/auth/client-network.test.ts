import { describe, expect, it } from 'vitest';
import { clientNetwork } from './client-network.ts';

// Address forms from RFC 4291 §2.2 (text representation) and RFC 5737 / RFC 3849 documentation ranges.
describe('clientNetwork', () => {
  it('keeps an IPv4 address, also when IPv4-mapped', () => {
    expect(clientNetwork('192.0.2.7')).toBe('192.0.2.7');
    expect(clientNetwork('::ffff:192.0.2.7')).toBe('192.0.2.7');
  });
  it('counts an IPv6 address by its /64, however it is written', () => {
    expect(clientNetwork('2001:db8:1:2:aa:bb:cc:dd')).toBe('2001:db8:1:2::/64');
    expect(clientNetwork('2001:0db8:0001:0002::1')).toBe('2001:db8:1:2::/64');
    expect(clientNetwork('2001:db8::1')).toBe('2001:db8:0:0::/64');
    expect(clientNetwork('::1')).toBe('0:0:0:0::/64');
    expect(clientNetwork('fe80::1%eth0')).toBe('fe80:0:0:0::/64');
  });
  it('names a missing address', () => {
    expect(clientNetwork(undefined)).toBe('unknown');
  });
});
