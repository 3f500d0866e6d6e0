import { describe, expect, it } from 'vitest';
import { EDITABLE_FIELDS } from '../../src/lib/api/types';
import { FIELDS, isEditableField } from '../../src/features/review/fields';
import { EDITABLE } from '../../server/measurements/service';

// The API document does not list the fields PATCH /measurements/:id accepts yet, so the client keeps
// one copy (src/lib/api/types.ts); the reference is the server's own list (server/measurements/service.ts).
describe('editable fields', () => {
  it('the client’s list is the server’s, in the same order', () => {
    expect([...EDITABLE_FIELDS]).toEqual([...EDITABLE]);
  });
  it('the review table offers editing only on fields the server accepts', () => {
    for (const f of FIELDS) {
      if (f.editable) expect(EDITABLE_FIELDS as readonly string[]).toContain(f.key);
      expect(isEditableField(f.key)).toBe(f.editable);
    }
    expect(isEditableField('p_debiased')).toBe(false); // derived: the server re-derives it
  });
});
