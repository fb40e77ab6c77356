import { ZxcvbnFactory, type ZxcvbnResult } from '@zxcvbn-ts/core';
import * as common from '@zxcvbn-ts/language-common';
import * as en from '@zxcvbn-ts/language-en';
import { KeelsonApiError } from '../../shared/errors';
import { newPasswordSchema } from '../../shared/auth';

/**
 * zxcvbn-ts with its bundled dictionaries (common passwords, English words and names, keyboard
 * layouts). Everything is in the installed packages; nothing is fetched at run time.
 */
let zxcvbn: ZxcvbnFactory | null = null;
function estimator(): ZxcvbnFactory {
  zxcvbn ??= new ZxcvbnFactory({
    dictionary: { ...common.dictionary, ...en.dictionary },
    graphs: common.adjacencyGraphs,
    translations: en.translations,
  });
  return zxcvbn;
}

/**
 * Lowest zxcvbn score accepted (0–4). 3 means about 10^8 guesses or more ("safely unguessable" for an
 * online attack in zxcvbn's scale; the score its authors suggest as the floor — common practice).
 */
export const MIN_PASSWORD_SCORE = 3;

export interface PasswordVerdict {
  ok: boolean;
  /** Why it is refused, in words; null when accepted. */
  message: string | null;
  score: number;
}

function isCommonPassword(r: ZxcvbnResult): boolean {
  // One dictionary match spanning the whole password, found in the list of passwords people use most.
  return r.sequence.length === 1 && r.sequence[0]?.pattern === 'dictionary' && (r.sequence[0] as { dictionaryName?: string }).dictionaryName === 'passwords-common';
}

/**
 * Checks a new password: the shape rules of `newPasswordSchema` (length, not one repeated
 * character), then the strength estimate. `userInputs` (e-mail, name) count as easy to guess.
 */
export function judgePassword(password: string, userInputs: string[] = []): PasswordVerdict {
  const shape = newPasswordSchema.safeParse(password);
  if (!shape.success) return { ok: false, message: shape.error.issues[0]?.message ?? 'Choose another password', score: 0 };
  const inputs = userInputs.flatMap((s) => [s, ...s.split(/[^\p{L}\p{N}]+/u)]).filter((s) => s.length >= 3);
  const r = estimator().check(password, inputs);
  if (r.score >= MIN_PASSWORD_SCORE) return { ok: true, message: null, score: r.score };
  if (isCommonPassword(r)) return { ok: false, message: 'This is one of the most common passwords; choose one nobody would guess', score: r.score };
  const hint = [r.feedback.warning, ...r.feedback.suggestions]
    .filter((s): s is string => !!s)
    .map((s) => s.trim().replace(/\.+$/, ''))
    .join('. ');
  return {
    ok: false,
    message: `This password is too easy to guess${hint ? `: ${hint}` : ''}. Longer passphrases of unrelated words work well`,
    score: r.score,
  };
}

/** Throws a 400 `validation_failed` naming `field` when the password is refused. */
export function assertPasswordAllowed(password: string, field: string, userInputs: string[] = []): void {
  const v = judgePassword(password, userInputs);
  if (!v.ok) throw new KeelsonApiError('validation_failed', `The new password is not accepted: ${v.message}`, [{ path: [field], message: v.message ?? 'Choose another password' }]);
}
