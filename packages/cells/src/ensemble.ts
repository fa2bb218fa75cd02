/**
 * Several models of one description, trained from different seeds, as one model whose units fall into independent
 * blocks: member k's units are the k-th block of every gate, its recurrent and next-layer weights the k-th diagonal
 * block (zero elsewhere), its outputs the k-th block of the readout. The stacked model computes every member's
 * outputs side by side in one pass, so the weight file, the runtime, streaming and ONNX export take it as they take
 * any model; the price is zeros in the off-diagonal blocks (the recurrent weights grow K² where the members hold K).
 * Forecasts combine the members' outputs by their median (combining forecasts: the most accurate methods of the M4
 * competition were combinations, Makridakis, Spiliotis & Assimakopoulos, IJF 36, 2020).
 */
import { fail } from '@weft/core';
import type { ModelDescription } from './description.js';
import { MAX_HIDDEN } from './description.js';
import { layerDirections, modelLayout } from './layout.js';
import { SequenceModel } from './model.js';

/** The description of `count` members of `member` stacked into one model (hidden sizes and readout × count). */
export function stackedDescription(member: ModelDescription, count: number): ModelDescription {
  if (!Number.isInteger(count) || count < 1) fail('invalid_option', 'members', 'a whole number ≥ 1', String(count));
  if (member.input.kind !== 'values')
    fail('invalid_option', 'description.input.kind', "'values' (members are stacked over numeric inputs only)", JSON.stringify(member.input.kind));
  member.layers.forEach((layer, i) => {
    if (layerDirections(layer).length !== 1)
      fail('invalid_option', `description.layers[${i}].bidirectional`, 'a layer reading one way (members are stacked over one-way layers only)', 'true');
    if (layer.hidden * count > MAX_HIDDEN)
      fail(
        'invalid_option',
        'members',
        `at most ${Math.floor(MAX_HIDDEN / layer.hidden)} members of ${layer.hidden} hidden units (${MAX_HIDDEN} in all)`,
        String(count),
      );
  });
  return {
    ...member,
    layers: member.layers.map((layer) => ({ ...layer, hidden: layer.hidden * count })),
    readout: member.readout === undefined || member.readout === null ? member.readout : { width: member.readout.width * count },
  };
}

/**
 * One model holding every member (same description, built-in cells): see the file's comment. Member k's output j
 * is the stacked model's output k × W + j, W being a member's output width.
 */
export function stackMembers(members: readonly SequenceModel[]): SequenceModel {
  if (members.length === 0) fail('invalid_option', 'members', 'at least one model', 'none');
  const first = members[0];
  const same = JSON.stringify(first.description);
  members.forEach((m, k) => {
    if (JSON.stringify(m.description) !== same)
      fail('invalid_option', `members[${k}].description`, 'the description of members[0]', JSON.stringify(m.description).slice(0, 80));
    if (m.dtype !== first.dtype) fail('invalid_option', `members[${k}].dtype`, first.dtype, m.dtype);
  });
  if (!modelLayout(first.description).builtIn) fail('invalid_option', 'members[0].description', 'built-in cells (lstm, gru, plain)', 'a cell of your own');
  const count = members.length;
  const stacked = new SequenceModel(stackedDescription(first.description, count), { dtype: first.dtype });
  const hidden = first.description.layers.map((layer) => layer.hidden);
  const wide = new Map(stacked.parameters().map((p) => [p.name, p.tensor]));
  const narrow = members.map((m) => new Map(m.parameters().map((p) => [p.name, p.tensor])));
  for (const [name, tensor] of wide) {
    const layer = /^layers\[(\d+)\]/.exec(name);
    // Units per block along the last axis: the layer's hidden size within each gate, or the readout's width.
    const unit = layer === null ? first.outputWidth : hidden[Number(layer[1])];
    // Rows of a matrix belong to a member (its own units below), except the first layer's input rows, which every
    // member reads.
    const sharedRows = layer !== null && layer[1] === '0' && name.endsWith('.input');
    const out = tensor.data;
    out.fill(0);
    const columns = tensor.shape[tensor.shape.length - 1];
    const narrowColumns = columns / count;
    narrow.forEach((parameters, k) => {
      const source = parameters.get(name)!;
      const matrix = source.shape.length === 2;
      const rows = matrix ? source.shape[0] : 1;
      for (let r = 0; r < rows; r++) {
        const row = !matrix || sharedRows ? r : k * rows + r;
        for (let c = 0; c < narrowColumns; c++) {
          const gate = Math.floor(c / unit);
          out[row * columns + gate * unit * count + k * unit + (c % unit)] = source.data[r * narrowColumns + c];
        }
      }
    });
  }
  return stacked;
}

/**
 * The median over `members` blocks of `width` outputs, per output: out[j] = median of values[from + k × width + j]
 * over k (the mean of the middle two for an even count). `scratch` holds at least `members` numbers; nothing is
 * allocated.
 */
export function medianOfMembers(
  values: ArrayLike<number>,
  from: number,
  members: number,
  width: number,
  out: { [index: number]: number },
  scratch: Float64Array,
): void {
  for (let j = 0; j < width; j++) {
    // Insertion sort of the members' values for output j (a handful of members).
    for (let k = 0; k < members; k++) {
      const v = values[from + k * width + j];
      let i = k;
      while (i > 0 && scratch[i - 1] > v) {
        scratch[i] = scratch[i - 1];
        i--;
      }
      scratch[i] = v;
    }
    const middle = members >> 1;
    out[j] = members % 2 === 1 ? scratch[middle] : (scratch[middle - 1] + scratch[middle]) / 2;
  }
}
