/**
 * The organisation's password policy and the check every new password passes (invitation accept,
 * password reset). 21 CFR 11.300 asks for controls that keep identification codes and passwords
 * unique and safe from unauthorised use; EU GMP Annex 11 §12.1 for logical access control. The
 * policy the admin sets is a minimum length and a number of character classes (lower case, upper
 * case, digits, other characters); on top of it, always, a password may not be the person's own
 * e-mail address (or contain its name part), the product's name, or a very common password —
 * NIST SP 800-63B §5.1.1.2 names these "context-specific words" and "commonly-used" values as what
 * a verifier should refuse.
 *
 * Example: `passwordProblems('Password123!', { minLength: 12, requiredClasses: 3 },
 * { email: 'rhea@lab.example' })` → `['This is one of the most common passwords…']`.
 */

export interface PasswordPolicy {
  minLength: number;
  /** How many of the four character classes a password must use (1–4). */
  requiredClasses: number;
}

export const DEFAULT_PASSWORD_POLICY: PasswordPolicy = { minLength: 12, requiredClasses: 3 };

/** The shortest e-mail name part that is refused inside a password (shorter ones match by chance). */
const MIN_NAME_PART_IN_PASSWORD = 4;
const PRODUCT_NAME = 'rateledger';

/**
 * Very common passwords, as seen again and again at the top of published lists of leaked
 * passwords (common practice; the list is from memory, kept short on purpose). A password is
 * refused when it is one of these, or one of these with digits and symbols only added around it
 * ("Password123!").
 */
export const COMMON_PASSWORDS: ReadonlySet<string> = new Set([
  '123456',
  '12345678',
  '123456789',
  '1234567890',
  '111111',
  '000000',
  'password',
  'passw0rd',
  'p@ssw0rd',
  'qwerty',
  'qwertyuiop',
  'qwerty123',
  'asdfghjkl',
  'zaq12wsx',
  '1q2w3e4r',
  'abc123',
  'letmein',
  'welcome',
  'iloveyou',
  'admin',
  'administrator',
  'monkey',
  'dragon',
  'football',
  'baseball',
  'sunshine',
  'princess',
  'master',
  'shadow',
  'superman',
  'trustno1',
  'changeme',
  'secret',
  'login',
  'starwars',
  'freedom',
  'whatever',
  'hello',
  'test',
  'guest',
  'laboratory',
  'summer',
  'winter',
  'spring',
  'autumn',
]);

const CLASS_TESTS: readonly { name: string; test: RegExp }[] = [
  { name: 'lower-case letters', test: /\p{Ll}/u },
  { name: 'upper-case letters', test: /\p{Lu}/u },
  { name: 'digits', test: /\p{Nd}/u },
  { name: 'other characters (space, punctuation, symbols)', test: /[^\p{Ll}\p{Lu}\p{Nd}]/u },
];

/** How many of the four character classes the password uses. */
export function characterClassCount(password: string): number {
  return CLASS_TESTS.filter((entry) => entry.test.test(password)).length;
}

/** The policy in sentences, for the page that asks for a password. */
export function describePasswordPolicy(policy: PasswordPolicy): string[] {
  return [
    `At least ${policy.minLength} characters.`,
    policy.requiredClasses <= 1
      ? 'Any characters.'
      : `At least ${policy.requiredClasses} of: ${CLASS_TESTS.map((entry) => entry.name).join(', ')}.`,
    'Not your e-mail address, not the name of this product, and not a very common password.',
  ];
}

/** The strictest of several policies (a person in two organisations meets both). */
export function strictestPolicy(policies: readonly PasswordPolicy[]): PasswordPolicy {
  return policies.reduce(
    (strictest, policy) => ({
      minLength: Math.max(strictest.minLength, policy.minLength),
      requiredClasses: Math.max(strictest.requiredClasses, policy.requiredClasses),
    }),
    policies[0] ?? DEFAULT_PASSWORD_POLICY,
  );
}

/** Everything wrong with a proposed password under the policy; empty when it is acceptable. */
export function passwordProblems(
  password: string,
  policy: PasswordPolicy,
  person: { email: string },
): string[] {
  const problems: string[] = [];
  const length = [...password].length;
  if (length < policy.minLength)
    problems.push(`Use at least ${policy.minLength} characters (this one has ${length}).`);
  const classes = characterClassCount(password);
  if (classes < policy.requiredClasses)
    problems.push(
      `Use at least ${policy.requiredClasses} kinds of character among lower case, upper case, digits and other characters (this one uses ${classes}).`,
    );
  const lower = password.toLowerCase();
  const email = person.email.trim().toLowerCase();
  const namePart = email.split('@')[0] ?? '';
  if (lower === email || lower === namePart) problems.push('Do not use your e-mail address as the password.');
  else if (namePart.length >= MIN_NAME_PART_IN_PASSWORD && lower.includes(namePart))
    problems.push(`Do not build the password on your e-mail name ("${namePart}").`);
  if (lower.includes(PRODUCT_NAME)) problems.push('Do not build the password on the name of this product.');
  const core = lower.replace(/^[^\p{L}]+|[^\p{L}]+$/gu, '');
  if (COMMON_PASSWORDS.has(lower) || COMMON_PASSWORDS.has(core))
    problems.push('This is one of the most common passwords, the first an attacker tries. Choose another.');
  return problems;
}
