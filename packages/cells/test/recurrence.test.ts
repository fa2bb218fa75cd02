import { describe, expect, it } from 'vitest';
import { Tape, zeros } from '@weft/core';
import { GruCell, LstmCell, MAX_HIDDEN, PlainCell, buildModel, runSequence } from '@weft/cells';
import { hiddenProblem } from '@weft/cells/internal';

describe('what the built-in cells share: their options and the checks at their boundary', () => {
  const tape = new Tape();

  it('names the layer and argument for a wrong input width', () => {
    const cell = new LstmCell({ inputWidth: 3, hidden: 4, name: 'layers[0].forward' });
    expect(() => runSequence(tape, cell, zeros([5, 2, 4]), {}, 'layers[0]')).toThrowError(
      'Shape mismatch at layers[0].inputs: expected [steps, batch, 3], received [5, 2, 4]',
    );
    expect(() => cell.step(tape, zeros([2, 4]), [zeros([2, 4]), zeros([2, 4])])).toThrowError(
      'Shape mismatch at layers[0].forward.input: expected [batch, 3], received [2, 4]',
    );
  });

  it('holds a hidden size to one bound wherever it enters: a cell, a description, and says so in the same words', () => {
    expect(MAX_HIDDEN).toBe(4096);
    expect(() => new GruCell({ inputWidth: 3, hidden: 4097, name: 'layers[0].forward' })).toThrowError(
      'Invalid option at layers[0].forward.hidden: expected a whole number from 1 to 4096, received 4097',
    );
    expect(() => new PlainCell({ inputWidth: 3, hidden: 0 })).toThrowError(
      'Invalid option at plain.hidden: expected a whole number from 1 to 4096, received 0',
    );
    expect(() => buildModel({ input: { kind: 'values', width: 3 }, layers: [{ cell: 'lstm', hidden: 4097 }] })).toThrowError(
      'Invalid option at description.layers[0].hidden: expected a whole number from 1 to 4096, received 4097',
    );
    expect([hiddenProblem(1), hiddenProblem(4096), hiddenProblem(4096.5), hiddenProblem('8')]).toEqual([
      null,
      null,
      'a whole number from 1 to 4096',
      'a whole number from 1 to 4096',
    ]);
  });

  it('refuses the option names of earlier versions by name, so a program written for them learns the new word', () => {
    const old = { inputSize: 3, hiddenSize: 4 } as unknown as ConstructorParameters<typeof LstmCell>[0];
    expect(() => new LstmCell(old)).toThrowError('Invalid option at lstm.hiddenSize: expected the option hidden (hiddenSize was renamed), received 4');
    const halfway = { inputSize: 3, hidden: 4 } as unknown as ConstructorParameters<typeof LstmCell>[0];
    expect(() => new LstmCell(halfway)).toThrowError('Invalid option at lstm.inputSize: expected the option inputWidth (inputSize was renamed), received 3');
  });

  it('names the state slot and both shapes for a step given a wrong state', () => {
    const cell = new LstmCell({ inputWidth: 3, hidden: 4, name: 'layers[0].forward' });
    expect(() => cell.step(tape, zeros([2, 3]), [zeros([2, 4]), zeros([2, 5])])).toThrowError(
      'Shape mismatch at layers[0].forward.state.c: expected [2, 4], received [2, 5]',
    );
    expect(() => cell.step(tape, zeros([2, 3]), [zeros([2, 4])])).toThrowError(
      'Invalid argument at layers[0].forward.state: expected 2 tensors (h, c), received 1',
    );
  });
});
