/** The audit log reads spec archive and restore as sentences (shared/audit.ts), not as key: value lines. */
import { describe, expect, it } from 'vitest';
import { describeAuditEntry } from '../../shared/audit';

describe('audit words for specs', () => {
  it('names who archived or restored which spec', () => {
    const person = { user: () => 'Rhea Tolland' };
    expect(describeAuditEntry({ action: 'spec.archive', userId: 3, detail: JSON.stringify({ specId: 12 }) }, person).sentence).toBe('Rhea Tolland archived model spec #12.');
    expect(describeAuditEntry({ action: 'spec.restore', userId: 3, detail: JSON.stringify({ specId: 12 }) }, person).sentence).toBe('Rhea Tolland restored model spec #12.');
    // a detail without the spec id falls back to lines, never a wrong sentence
    expect(describeAuditEntry({ action: 'spec.archive', userId: 3, detail: JSON.stringify({}) }, person)).toEqual({ sentence: null, lines: [] });
  });
});
