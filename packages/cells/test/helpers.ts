/** Shared builders for the cells tests. */
import { Random, type Tape, add } from '@weft/core';
import type { Tensor } from '@weft/core';
import { GruCell, LstmCell, PlainCell } from '@weft/cells';
import type { CellMode, RecurrentCell } from '@weft/cells';

export type CellCase = { label: string; make: (mode: CellMode, inputWidth: number, hidden: number, seed: number) => RecurrentCell };

export const cellCases: CellCase[] = [
  { label: 'LSTM', make: (mode, inputWidth, hidden, seed) => new LstmCell({ inputWidth, hidden, dtype: 'f64', random: seed, mode }) },
  {
    label: 'LSTM with peepholes',
    make: (mode, inputWidth, hidden, seed) => {
      const cell = new LstmCell({ inputWidth, hidden, dtype: 'f64', random: seed, mode, peepholes: true });
      // Peepholes start at zero; give them values so their gradients are exercised.
      const random = new Random(seed + 100);
      for (let i = 0; i < cell.peephole!.size; i++) cell.peephole!.data[i] = random.between(-0.5, 0.5);
      return cell;
    },
  },
  { label: 'GRU (reset before the product)', make: (mode, inputWidth, hidden, seed) => new GruCell({ inputWidth, hidden, dtype: 'f64', random: seed, mode }) },
  {
    label: 'GRU (reset after the product)',
    make: (mode, inputWidth, hidden, seed) => {
      const cell = new GruCell({ inputWidth, hidden, dtype: 'f64', random: seed, mode, resetAfterProduct: true });
      const random = new Random(seed + 200);
      for (let i = 0; i < hidden; i++) cell.recurrentCandidateBias!.data[i] = random.between(-0.5, 0.5);
      return cell;
    },
  },
  { label: 'plain tanh', make: (mode, inputWidth, hidden, seed) => new PlainCell({ inputWidth, hidden, dtype: 'f64', random: seed, mode }) },
  {
    label: 'plain ReLU',
    make: (mode, inputWidth, hidden, seed) => {
      const cell = new PlainCell({ inputWidth, hidden, dtype: 'f64', random: seed, mode, activation: 'relu' });
      // Move the recurrent matrix off the identity so the recurrence is not trivial.
      const random = new Random(seed + 300);
      for (let i = 0; i < cell.recurrent.size; i++) cell.recurrent.data[i] += random.between(-0.2, 0.2);
      for (let i = 0; i < cell.bias.size; i++) cell.bias.data[i] = random.between(0.05, 0.3);
      return cell;
    },
  },
];

/** Give every bias entry a random value so no gradient path is hidden by zeros. */
export function shakeBiases(cell: RecurrentCell, seed: number): void {
  const random = new Random(seed);
  for (const p of cell.parameters()) {
    if (p.name === 'bias') for (let i = 0; i < p.tensor.size; i++) p.tensor.data[i] += random.between(-0.3, 0.3);
  }
}

export { f64Input, weightedSum as weighted } from '../../../tests/helpers/tensors.js';

export function plus(tape: Tape, a: Tensor, b: Tensor): Tensor {
  return add(tape, a, b);
}
