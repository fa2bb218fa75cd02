/**
 * Row gather: out[i] = table[indices[i]] (an embedding lookup). Backward scatter-adds: row indices[i] of the
 * table's gradient receives out's gradient row i, so a row picked several times collects every share.
 */
import { fail } from '../errors.js';
import { noTensor } from '../tape.js';
import type { OperationKind, Tape } from '../tape.js';
import type { Tensor } from '../tensor.js';
import { requireBackend, requireRank } from './checks.js';

/** What a row gather saves: the table and the rows it picked. */
interface GatherSaved {
  table: Tensor;
  indices: Int32Array;
}

const gatherKind: OperationKind<GatherSaved> = {
  name: 'gatherRows',
  saves: () => ({ table: noTensor, indices: new Int32Array(0) }),
  backward(node, tape): void {
    const { table, indices } = node.saved;
    const g = node.output.gradient!;
    const gt = tape.gradientOf(table);
    const width = table.shape[1];
    for (let i = 0; i < indices.length; i++) {
      const to = indices[i] * width;
      const from = i * width;
      tape.kernels.addAt(gt, to, g, from, width);
    }
  },
};

/** Rows of a [rows, width] table picked by `indices`; the result is [indices.length, width]. */
export function gatherRows(tape: Tape, table: Tensor, indices: Int32Array | readonly number[]): Tensor {
  requireRank('gatherRows', 'table', table, 2);
  requireBackend(tape, 'gatherRows', 'table', table);
  const [rows, width] = table.shape;
  const picked = indices instanceof Int32Array ? indices : Int32Array.from(indices);
  for (let i = 0; i < picked.length; i++) {
    const index = picked[i];
    if (index < 0 || index >= rows || (!(indices instanceof Int32Array) && index !== (indices as readonly number[])[i])) {
      fail('invalid_argument', `gatherRows.indices[${i}]`, `a whole number in [0, ${rows})`, String((indices as ArrayLike<number>)[i]));
    }
  }
  const out = tape.output([picked.length, width], table.dtype, table.tracked);
  for (let i = 0; i < picked.length; i++) {
    const from = picked[i] * width;
    const to = i * width;
    tape.kernels.copyAt(out.data, to, table.data, from, width);
  }
  const saved = tape.record(gatherKind, out);
  if (saved !== null) {
    saved.table = table;
    saved.indices = picked;
  }
  return out;
}
