/** Server `issues` onto react-hook-form fields (hooks/use-form-errors.ts), with the envelope shape of shared/errors.ts. */
import { describe, expect, it } from 'vitest';
import { KeelsonApiError } from '../../shared/errors';
import { placeServerIssues } from '../../hooks/use-form-errors';

type Form = { currentPassword: string; newPassword: string };
const FIELDS = ['currentPassword', 'newPassword'] as const;

function recorder() {
  const calls: [string, string, boolean | undefined][] = [];
  const setError = ((name: string, err: { message?: string }, opts?: { shouldFocus?: boolean }) => {
    calls.push([name, err.message ?? '', opts?.shouldFocus]);
  }) as unknown as Parameters<typeof placeServerIssues<Form>>[1];
  return { calls, setError };
}

describe('placeServerIssues', () => {
  it('puts each issue on the field its path names (first message per field) and leaves no general error', () => {
    const { calls, setError } = recorder();
    const err = new KeelsonApiError(
      'validation_failed',
      'The password change is not valid',
      [
        { path: ['newPassword'], message: 'Use at least 12 characters' },
        { path: ['newPassword'], message: 'Avoid a password from a breach list' },
        { path: ['currentPassword'], message: 'Enter your current password' },
      ],
      400,
    );
    expect(placeServerIssues<Form>(err, setError, FIELDS)).toBeNull();
    expect(calls).toEqual([
      ['newPassword', 'Use at least 12 characters', true],
      ['currentPassword', 'Enter your current password', false],
    ]);
  });

  it('keeps the error as the general one when an issue names no field of the form, or there are no issues', () => {
    const { calls, setError } = recorder();
    const mixed = new KeelsonApiError('validation_failed', 'x', [{ path: ['newPassword'], message: 'Too short' }, { path: ['token'], message: 'Expired' }], 400);
    expect(placeServerIssues<Form>(mixed, setError, FIELDS)).toBe(mixed);
    expect(calls).toEqual([['newPassword', 'Too short', true]]);
    const bare = new KeelsonApiError('rate_limited', 'Too many attempts', undefined, 429);
    expect(placeServerIssues<Form>(bare, setError, FIELDS)).toBe(bare);
    const network = new Error('offline');
    expect(placeServerIssues<Form>(network, setError, FIELDS)).toBe(network);
    expect(calls.length).toBe(1);
  });

  it('puts a nested path on the longest dotted field it starts with (spec form: spec.assets, spec.bootstrap)', () => {
    type SpecForm = { name: string; spec: { assets: string[]; bootstrap: { blockLength: number } } };
    const fields = ['name', 'spec', 'spec.assets', 'spec.bootstrap'] as const;
    const calls: [string, string][] = [];
    const setError = ((name: string, err: { message?: string }) => calls.push([name, err.message ?? ''])) as unknown as Parameters<typeof placeServerIssues<SpecForm>>[1];
    const err = new KeelsonApiError(
      'unprocessable',
      'The spec does not fit edition 1',
      [
        { path: ['spec', 'assets', 0], message: "The edition has no series 'X'" },
        { path: ['spec', 'bootstrap', 'blockLength'], message: 'A bootstrap block of 90 periods is too long' },
        { path: ['spec', 'lags'], message: 'A HAC lag of 40 is too long' },
      ],
      422,
    );
    expect(placeServerIssues<SpecForm>(err, setError, fields)).toBeNull();
    expect(calls).toEqual([
      ['spec.assets', "The edition has no series 'X'"],
      ['spec.bootstrap', 'A bootstrap block of 90 periods is too long'],
      ['spec', 'A HAC lag of 40 is too long'],
    ]);
  });
});
