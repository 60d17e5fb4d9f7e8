import { describe, expect, it } from 'vitest';
import {
  characterClassCount,
  DEFAULT_PASSWORD_POLICY,
  passwordProblems,
  strictestPolicy,
} from './password-policy.ts';

const person = { email: 'rhea.reviewer@lab.example' };

describe('passwordProblems', () => {
  it('accepts a long password with three classes that is none of the refused kinds', () => {
    expect(passwordProblems('Amber-kettle-41-rivers', DEFAULT_PASSWORD_POLICY, person)).toEqual([]);
  });

  it('counts length in characters, not bytes (NIST SP 800-63B §5.1.1.2: each Unicode code point counts as one)', () => {
    // 12 code points, 24 bytes in UTF-8.
    expect(passwordProblems('Ωmega-ÅÅÅ-ßß9', { minLength: 12, requiredClasses: 1 }, person)).toEqual([]);
    expect(passwordProblems('Ωmega-ÅÅ-ß9', { minLength: 12, requiredClasses: 1 }, person)[0]).toContain(
      'this one has 11',
    );
  });

  it('asks for the number of character classes the policy sets', () => {
    expect(characterClassCount('abc')).toBe(1);
    expect(characterClassCount('abcDEF')).toBe(2);
    expect(characterClassCount('abcDEF123')).toBe(3);
    expect(characterClassCount('abcDEF123 ')).toBe(4);
    const problems = passwordProblems('lowercaseonlyletters', { minLength: 8, requiredClasses: 3 }, person);
    expect(problems).toEqual([expect.stringContaining('at least 3 kinds of character')]);
  });

  it('refuses the e-mail address, its name part and the product name (context-specific words, NIST SP 800-63B §5.1.1.2)', () => {
    const loose = { minLength: 8, requiredClasses: 1 };
    expect(passwordProblems('Rhea.Reviewer@lab.example', loose, person)).toContain(
      'Do not use your e-mail address as the password.',
    );
    expect(passwordProblems('my-rhea.reviewer-2026', loose, person)[0]).toContain('e-mail name');
    expect(passwordProblems('MyRateLedger-2026', loose, person)[0]).toContain('name of this product');
  });

  it('refuses very common passwords, also with digits and symbols only added around them (common practice)', () => {
    const loose = { minLength: 6, requiredClasses: 1 };
    for (const password of ['123456', 'qwerty', 'Password1234!', '!!Welcome2026', 'P@ssw0rd2024']) {
      expect(passwordProblems(password, loose, person)).toContain(
        'This is one of the most common passwords, the first an attacker tries. Choose another.',
      );
    }
    expect(passwordProblems('password-kettle-river', loose, person)).toEqual([]);
  });

  it('lists every problem at once', () => {
    expect(passwordProblems('qwerty', DEFAULT_PASSWORD_POLICY, person)).toHaveLength(3);
  });
});

describe('strictestPolicy', () => {
  it('takes the larger demand of each rule, and the default when there is none', () => {
    expect(
      strictestPolicy([
        { minLength: 14, requiredClasses: 2 },
        { minLength: 10, requiredClasses: 4 },
      ]),
    ).toEqual({ minLength: 14, requiredClasses: 4 });
    expect(strictestPolicy([])).toEqual(DEFAULT_PASSWORD_POLICY);
  });
});
