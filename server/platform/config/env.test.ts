import { describe, expect, it } from 'vitest';
import { parseEnvironment } from './env.ts';

const base = { DATABASE_URL: 'postgres://app@db.internal:5432/rateledger', SESSION_SECRET: 'x'.repeat(32) };

describe('TRUST_PROXY and Secure cookies', () => {
  it('trusts no proxy unless told, so X-Forwarded-For is not believed', () => {
    expect(parseEnvironment(base).TRUST_PROXY).toBe(false);
    expect(parseEnvironment({ ...base, TRUST_PROXY: 'false' }).TRUST_PROXY).toBe(false);
    expect(parseEnvironment({ ...base, TRUST_PROXY: '0' }).TRUST_PROXY).toBe(false);
  });

  it('takes a hop count or a list of addresses, CIDR ranges and names', () => {
    expect(parseEnvironment({ ...base, TRUST_PROXY: '1' }).TRUST_PROXY).toBe(1);
    expect(
      parseEnvironment({ ...base, TRUST_PROXY: 'loopback, 10.0.0.0/8, fd00::/8, 192.0.2.10' }).TRUST_PROXY,
    ).toEqual(['loopback', '10.0.0.0/8', 'fd00::/8', '192.0.2.10']);
  });

  it('refuses `true` and anything that is not an address', () => {
    expect(() => parseEnvironment({ ...base, TRUST_PROXY: 'true' })).toThrow(/TRUST_PROXY=true/);
    expect(() => parseEnvironment({ ...base, TRUST_PROXY: 'proxy.internal' })).toThrow(/proxy\.internal/);
    expect(() => parseEnvironment({ ...base, TRUST_PROXY: '10.0.0.0/33' })).toThrow(/10\.0\.0\.0\/33/);
  });

  it('marks the cookies Secure whenever PUBLIC_URL is https, and then needs the proxy named', () => {
    expect(parseEnvironment({ ...base, PUBLIC_URL: 'http://127.0.0.1:3000' }).COOKIE_SECURE).toBe(false);
    const https = { ...base, PUBLIC_URL: 'https://lab.example.org', TRUST_PROXY: 'loopback' };
    expect(parseEnvironment(https).COOKIE_SECURE).toBe(true);
    expect(parseEnvironment({ ...https, COOKIE_SECURE: 'false' }).COOKIE_SECURE).toBe(true);
    expect(() => parseEnvironment({ ...base, PUBLIC_URL: 'https://lab.example.org' })).toThrow(
      /TRUST_PROXY is not set/,
    );
    expect(() => parseEnvironment({ ...base, COOKIE_SECURE: 'true' })).toThrow(/TRUST_PROXY is not set/);
  });
});
