import { HttpError } from '../../platform/http/http-error.ts';

/** A chosen password the policy refuses: 400 with one message per broken rule, on the password field. */
export class PasswordPolicyError extends HttpError {
  constructor(readonly problems: string[]) {
    super(
      400,
      'The password does not meet the policy.',
      problems.map((message) => ({ field: 'password', message })),
    );
  }
}
