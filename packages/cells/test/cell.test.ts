import { describe, expect, it } from 'vitest';
import { GruCell } from '@weft/cells';
import { hasFusedSequence } from '@weft/cells/internal';
import type { RecurrentCell } from '@weft/cells';

describe('the cell contract', () => {
  it('tells a cell with a whole-sequence path from one with steps only', () => {
    expect(hasFusedSequence(new GruCell({ inputWidth: 2, hidden: 3 }))).toBe(true);
    const stepsOnly = {
      kind: 'mine',
      inputWidth: 2,
      hidden: 3,
      dtype: 'f32',
      state: [{ name: 'h', width: 3 }],
      parameters: () => [],
      step: () => {
        throw new Error('not run');
      },
    } as unknown as RecurrentCell;
    expect(hasFusedSequence(stepsOnly)).toBe(false);
  });
});
