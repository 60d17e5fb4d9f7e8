import { describe, expect, it } from 'vitest';
import { needsBothSignatureComponents, signatureComponentsProblem } from './signature-components.ts';

describe('signature components (11.200(a))', () => {
  const check = {
    needsBothComponents: true,
    typedIdentity: 'Reviewer@Example.org',
    accountEmail: 'reviewer@example.org',
    passwordMatches: true,
    accountActive: true,
  };

  it('the first signing of a session needs user ID and password; later ones the password only', () => {
    expect(needsBothSignatureComponents({})).toBe(true);
    expect(needsBothSignatureComponents({ firstSigningDone: true })).toBe(false);
  });

  it('accepts the genuine owner (the user ID compared without regard to case)', () => {
    expect(signatureComponentsProblem(check)).toBeNull();
    expect(
      signatureComponentsProblem({ ...check, needsBothComponents: false, typedIdentity: undefined }),
    ).toBeNull();
  });

  it('names which component failed; a deactivated account fails like a wrong password', () => {
    expect(signatureComponentsProblem({ ...check, typedIdentity: 'someone@example.org' })).toBe(
      'user ID does not match the signed-in user',
    );
    expect(signatureComponentsProblem({ ...check, passwordMatches: false })).toBe('wrong password');
    expect(signatureComponentsProblem({ ...check, accountActive: false })).toBe('wrong password');
  });
});
