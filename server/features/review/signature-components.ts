/**
 * The signature components of 21 CFR 11.200(a) (paraphrased from memory; the regulation is not
 * held in this repository): at least two distinct components, a user ID and a password; when a
 * person signs several times in one continuous session, the first signing uses all components
 * and later ones at least the one only its owner knows; and only the genuine owner may use them.
 * Pure functions; `signing-checks.ts` applies them.
 */

/** Both signature components on the first signing of a session, the password alone later (11.200(a)(1)(i)). */
export function needsBothSignatureComponents(session: { firstSigningDone?: boolean }): boolean {
  return session.firstSigningDone !== true;
}

/**
 * Do the components typed prove the signer is the account's genuine owner (11.200(a))? Returns
 * the reason recorded with the failed attempt, or null. A deactivated account fails like a wrong
 * password; it rarely gets here, as its session ends at its next request (`loadSessionUser`).
 */
export function signatureComponentsProblem(check: {
  needsBothComponents: boolean;
  typedIdentity: string | undefined;
  accountEmail: string;
  passwordMatches: boolean;
  accountActive: boolean;
}): 'user ID does not match the signed-in user' | 'wrong password' | null {
  const identityMatches =
    !check.needsBothComponents || check.typedIdentity?.toLowerCase() === check.accountEmail.toLowerCase();
  if (!identityMatches) return 'user ID does not match the signed-in user';
  if (!check.passwordMatches || !check.accountActive) return 'wrong password';
  return null;
}
