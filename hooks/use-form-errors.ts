/**
 * Server answers on react-hook-form forms: the `issues` of a 400/422 envelope go onto the fields they
 * name (`setError`), and only what no field can show stays as the form's general error.
 */
import { useCallback, useState } from 'react';
import type { FieldValues, Path, UseFormSetError } from 'react-hook-form';
import { KeelsonApiError } from '../shared/errors';

/** The longest of `known` that is a leading part of `path` in dotted form (`['spec','assets',0]` → `spec.assets`), or ''. */
function fieldOf(path: readonly (string | number)[], known: ReadonlySet<string>): string {
  for (let k = path.length; k > 0; k--) {
    const name = path.slice(0, k).map(String).join('.');
    if (known.has(name)) return name;
  }
  return '';
}

/**
 * Puts each issue whose path starts with one of `fields` (dotted names for nested fields, e.g.
 * `spec.assets`) onto that field (the first message per field wins). Returns the error to show above the button: null when every issue found its field, else the
 * error itself (a message with no issues, or issues for no known field).
 */
export function placeServerIssues<F extends FieldValues>(error: unknown, setError: UseFormSetError<F>, fields: readonly Path<F>[]): unknown {
  if (!(error instanceof KeelsonApiError) || !error.issues?.length) return error;
  const known = new Set<string>(fields);
  const seen = new Set<string>();
  let unplaced = 0;
  for (const issue of error.issues) {
    const name = fieldOf(issue.path, known);
    if (!name) {
      unplaced += 1;
      continue;
    }
    if (seen.has(name)) continue;
    seen.add(name);
    setError(name as Path<F>, { type: 'server', message: issue.message }, { shouldFocus: seen.size === 1 });
  }
  return unplaced > 0 || seen.size === 0 ? error : null;
}

/** `onServerError(err)` for a mutation's onError; `general` is what the form shows as a whole. */
export function useServerErrors<F extends FieldValues>(setError: UseFormSetError<F>, fields: readonly Path<F>[]) {
  const [general, setGeneral] = useState<unknown>(null);
  const onServerError = useCallback((err: unknown) => setGeneral(placeServerIssues(err, setError, fields)), [setError, fields]);
  const clear = useCallback(() => setGeneral(null), []);
  return { general, onServerError, clear };
}
