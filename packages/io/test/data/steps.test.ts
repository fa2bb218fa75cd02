/**
 * Long tables (data/steps.ts): rows grouped into sequences by id, ordered by a step column or file order, one
 * label per sequence, value columns chosen or found; errors at file:line:column for steps out of order, a label
 * that changes within a sequence and a value that is not a number. Worked by hand.
 */
import { describe, expect, it } from 'vitest';
import { WeftError } from '@weft/core';
import { parseTable, readStepTable } from '@weft/io';

const text = 'id,step,label,speed,note\nm1,1,worn,0.5,ok\nm2,1,sound,0.4,ok\nm1,2,worn,0.7,ok\n';

describe('readStepTable', () => {
  it('groups rows by id in the order ids first appear, reads the number columns and leaves out text columns', () => {
    const read = readStepTable(parseTable(text, { file: 'mill.csv' }), { idColumn: 'id', stepColumn: 'step', labelColumn: 'label' });
    expect(read.columns).toEqual(['speed']);
    expect(read.leftOut).toEqual(['note (no numbers: "ok" at line 2)']);
    expect(read.sequences).toEqual([
      { id: 'm1', line: 2, label: 'worn', steps: [[0.5], [0.7]] },
      { id: 'm2', line: 3, label: 'sound', steps: [[0.4]] },
    ]);
  });

  it('names file, line and column for steps out of order, a label that changes, and a bad number', () => {
    const error = (t: string, options = { idColumn: 'id', stepColumn: 'step', labelColumn: 'label' }) => {
      try {
        readStepTable(parseTable(t, { file: 'mill.csv' }), options);
      } catch (caught) {
        expect(caught).toBeInstanceOf(WeftError);
        return (caught as WeftError).message;
      }
      return 'no error';
    };
    expect(error('id,step,label,speed\nm1,2,worn,1\nm1,1,worn,2\n')).toBe(
      'Bad data at mill.csv:3:4: expected a step after 2 (the step of id "m1" on line 2); steps of a sequence must increase down the file, received 1',
    );
    expect(error('id,step,label,speed\nm1,1,worn,1\nm1,2,sound,2\n')).toBe(
      'Bad data at mill.csv:3:6: expected the label "worn" that id "m1" has on line 2 (one label per sequence), received "sound"',
    );
    expect(error('id,step,label,speed\nm1,1,worn,1\nm1,2,worn,fast\n')).toBe(
      'Bad data at mill.csv:3:11: expected a decimal number in column "speed", received "fast"',
    );
    expect(error('id,step,label,speed\nm1,1,worn,1\n', { idColumn: 'machine', stepColumn: 'step', labelColumn: 'label' })).toBe(
      'Bad data at mill.csv:1:1: expected a column named "machine" (the sequence ids), received the columns id, step, label, speed',
    );
  });
});
