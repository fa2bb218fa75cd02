import { describe, expect, it } from 'vitest';
import { Tape, WeftError, tensor, zeros } from '@weft/core';
import { GruCell, LstmCell, MAX_HIDDEN, PlainCell, buildModel, hiddenProblem, runSequence } from '@weft/cells';

function problemsOf(run: () => unknown): WeftError {
  try {
    run();
  } catch (error) {
    if (error instanceof WeftError) return error;
    throw error;
  }
  throw new Error('expected a WeftError');
}

describe('bad input to cells and layers', () => {
  const model = buildModel({ input: { kind: 'values', width: 3 }, layers: [{ cell: 'lstm', hidden: 4 }, { cell: 'gru', hidden: 2, bidirectional: true }] });
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
    expect(() => new PlainCell({ inputWidth: 3, hidden: 0 })).toThrowError('Invalid option at plain.hidden: expected a whole number from 1 to 4096, received 0');
    expect(() => buildModel({ input: { kind: 'values', width: 3 }, layers: [{ cell: 'lstm', hidden: 4097 }] })).toThrowError(
      'Invalid option at description.layers[0].hidden: expected a whole number from 1 to 4096, received 4097',
    );
    expect([hiddenProblem(1), hiddenProblem(4096), hiddenProblem(4096.5), hiddenProblem('8')]).toEqual([null, null, 'a whole number from 1 to 4096', 'a whole number from 1 to 4096']);
  });

  it('refuses the option names of earlier versions by name, so a program written for them learns the new word', () => {
    const old = { inputSize: 3, hiddenSize: 4 } as unknown as ConstructorParameters<typeof LstmCell>[0];
    expect(() => new LstmCell(old)).toThrowError('Invalid option at lstm.hiddenSize: expected the option hidden (hiddenSize was renamed), received 4');
    const halfway = { inputSize: 3, hidden: 4 } as unknown as ConstructorParameters<typeof LstmCell>[0];
    expect(() => new LstmCell(halfway)).toThrowError('Invalid option at lstm.inputSize: expected the option inputWidth (inputSize was renamed), received 3');
  });

  it('names the state slot for a wrong state shape', () => {
    expect(() => model.run(tape, zeros([5, 2, 3]), { initialState: [zeros([2, 4]), zeros([2, 5]), zeros([2, 2]), zeros([2, 2])] })).toThrowError(
      'Shape mismatch at layers[0].initialState.c: expected [2, 4], received [2, 5]',
    );
    expect(() => model.run(tape, zeros([5, 2, 3]), { initialState: [zeros([2, 4])] })).toThrowError(
      'Invalid argument at model.initialState: expected 4 tensors (layers[0].forward.h, layers[0].forward.c, layers[1].forward.h, layers[1].backward.h), received 1',
    );
    expect(() => model.run(tape, zeros([5, 2, 3]), { initialState: [zeros([2, 4]), zeros([2, 4]), zeros([2, 2]), zeros([3, 2])] })).toThrowError(
      'Shape mismatch at layers[1].backward.initialState.h: expected [2, 2], received [3, 2]',
    );
  });

  it('refuses a length beyond T or below 0, and a lengths array of the wrong size', () => {
    expect(() => model.run(tape, zeros([5, 2, 3]), { lengths: [5, 6] })).toThrowError(
      'Invalid argument at model.lengths[1]: expected a whole number in [0, 5], received 6',
    );
    expect(() => model.run(tape, zeros([5, 2, 3]), { lengths: [-1, 2] })).toThrowError(
      'Invalid argument at model.lengths[0]: expected a whole number in [0, 5], received -1',
    );
    expect(() => model.run(tape, zeros([5, 2, 3]), { lengths: [5, 5, 5] })).toThrowError(
      'Shape mismatch at model.lengths: expected 2 lengths (one per batch row), received 3',
    );
    const cell = new LstmCell({ inputWidth: 3, hidden: 4 });
    expect(() => runSequence(tape, cell, zeros([5, 2, 3]), { lengths: Int32Array.of(1, 2, 3) }, 'layers[0]')).toThrowError(
      'Shape mismatch at layers[0].lengths: expected 2 lengths (one per batch row), received 3',
    );
  });

  it('lists every problem of a description, with paths, including an unknown cell kind', () => {
    const error = problemsOf(() => buildModel({
      input: { kind: 'values', width: 0 },
      layers: [{ cell: 'lstm', hidden: 4, activation: 'relu' }, { cell: 'transformer', hidden: 8 }],
      dropout: 1.5,
    }));
    expect(error.problems.map((p) => `${p.path}: ${p.received}`)).toEqual([
      'description.input.width: 0',
      'description.layers[0].activation: "relu"',
      'description.layers[1].cell: "transformer"',
      'description.dropout: 1.5',
    ]);
    expect(error.message).toContain("Invalid option at description.layers[1].cell: expected one of 'lstm', 'gru', 'plain', received \"transformer\"");
  });

  it('refuses a dtype mismatch between input and cell', () => {
    const cell = new LstmCell({ inputWidth: 3, hidden: 4, dtype: 'f64' });
    expect(() => runSequence(tape, cell, tensor(new Array(6).fill(0), [1, 2, 3]), {}, 'layers[0]')).toThrowError(
      'Dtype mismatch at layers[0].inputs: expected f64, received f32',
    );
  });
});
