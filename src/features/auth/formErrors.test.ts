import { describe, expect, it } from 'vitest';
import { loginBodySchema, newAccountSchema } from '../../../shared/schemas/auth';
import { ApiRequestError } from '../../api/errors';
import { serverErrors, zodFieldErrors } from './formErrors';

describe('form errors', () => {
  it('maps the shared schemas to one message per field', () => {
    const r = newAccountSchema.safeParse({ displayName: ' ', password: 'short' });
    expect(r.success).toBe(false);
    expect(zodFieldErrors(r.error!)).toEqual({ displayName: 'Enter your name.', password: 'Use at least 8 characters.' });
    const ok = loginBodySchema.safeParse({ email: ' Kit@Example.ORG ', password: 'x' });
    expect(ok.success && ok.data.email).toBe('kit@example.org');
  });

  it('puts server field details on fields and other failures on the form', () => {
    const weak = new ApiRequestError(400, 'weak_password', 'Too common.', [{ path: 'password', message: 'That password is too common.' }]);
    expect(serverErrors(weak)).toEqual({ fields: { password: 'That password is too common.' }, form: null });
    const limited = new ApiRequestError(429, 'too_many_attempts', 'Too many attempts. Try again in 2 seconds.');
    expect(serverErrors(limited)).toEqual({ fields: {}, form: 'Too many attempts. Try again in 2 seconds.' });
  });
});
