/**
 * The axes of a value on the chain, followed through the layout glue between nodes (Identity, Transpose, Squeeze,
 * Reshape): t time, b batch, d direction, h hidden, f features (direction and hidden merged, forward first), v
 * readout values, n rows of time and batch. A recurrent node's Y starts as [t, d, b, h] (layout 0) or [b, t, d, h]
 * (layout 1); the next node must receive [t, b, f] or [b, t, f].
 */
import { fail } from '@weft/core';
import type { OnnxAttribute, OnnxNode, OnnxTensor } from './model.js';

/** A value's axes as the walk knows them, with the sizes of the ones it knows. */
export interface Axes {
  readonly labels: readonly string[];
  readonly sizes: Readonly<Record<string, number>>;
}

/** How a node is named in messages: its index, name and operator. */
export function nodeLabel(node: OnnxNode, index: number): string {
  return `node ${index}${node.name === '' ? '' : ` "${node.name}"`} (${node.opType})`;
}

/** A node's attribute by name. */
export function attribute(node: OnnxNode, name: string): OnnxAttribute | undefined {
  return node.attributes.find((a) => a.name === name);
}

/** The axes after one glue node, or an error saying what the node would do to them. */
export function moveAxes(node: OnnxNode, index: number, axes: Axes, constants: Map<string, OnnxTensor>): Axes {
  const where = nodeLabel(node, index);
  const labels = axes.labels;
  const size = (label: string): number | undefined => axes.sizes[label];
  const normalise = (axis: number): number => (axis < 0 ? axis + labels.length : axis);
  if (node.opType === 'Identity') return axes;
  if (node.opType === 'Transpose') {
    const perm = attribute(node, 'perm')?.ints ?? labels.map((_, i) => labels.length - 1 - i);
    if (perm.length !== labels.length || [...perm].sort().some((v, i) => v !== i))
      fail('invalid_option', `${where}.perm`, `a permutation of ${labels.length} axes`, JSON.stringify(perm));
    return { labels: perm.map((i) => labels[i]), sizes: axes.sizes };
  }
  if (node.opType === 'Squeeze') {
    const axesInput = node.inputs[1];
    const list =
      axesInput !== undefined && axesInput !== '' ? (constants.get(axesInput)?.values as readonly number[] | undefined) : attribute(node, 'axes')?.ints;
    if (list === undefined) fail('invalid_option', `${where}.axes`, 'constant axes (the direction axis)', 'none or computed');
    const removed = list.map(normalise);
    for (const axis of removed) {
      if (labels[axis] !== 'd' || size('d') !== 1)
        fail('invalid_option', `${where}.axes`, 'the direction axis of a one-direction layer', `axis ${axis} (${labels[axis] ?? 'none'})`);
    }
    return { labels: labels.filter((_, i) => !removed.includes(i)).map((l) => (l === 'h' ? 'f' : l)), sizes: axes.sizes };
  }
  // Reshape: copy axes (0), merge direction and hidden into features, or flatten time and batch into rows.
  const shapeName = node.inputs[1];
  const shape = shapeName === undefined ? undefined : constants.get(shapeName);
  if (shape === undefined) fail('invalid_option', `${where}.input[1]`, 'a constant shape', shapeName === undefined ? 'none' : `"${shapeName}", computed`);
  const entries = Array.from(shape.values as ArrayLike<number>);
  const out: string[] = [];
  let p = 0;
  const merged = (from: number): number => (labels[from] === 'd' && labels[from + 1] === 'h' ? 2 : 0);
  for (let i = 0; i < entries.length; i++) {
    const entry = entries[i];
    if (entry === 0 && p === i && p < labels.length) {
      out.push(labels[p++]);
    } else if (entry === -1 && i === entries.length - 1) {
      const rest = labels.slice(p);
      if (rest.length === 1) out.push(rest[0]);
      else if (rest.join() === 'd,h') out.push('f');
      else fail('invalid_option', `${where}.shape`, 'the last axes as one of features (direction, hidden)', `[${rest.join(', ')}]`);
      p = labels.length;
    } else if (entry === -1 && i === 0 && entries.length === 2) {
      const lead = labels.slice(0, labels.length - (merged(labels.length - 2) === 2 ? 2 : 1));
      if (lead.join() !== 't,b' && lead.join() !== 'b,t') fail('invalid_option', `${where}.shape`, 'rows of time and batch', `[${lead.join(', ')}]`);
      out.push(lead.join() === 't,b' ? 'n' : 'n-batch-major');
      p = lead.length;
    } else if (entry > 0 && merged(p) === 2 && entry === size('f')) {
      out.push('f');
      p += 2;
    } else if (entry > 0 && size(labels[p]) === entry) {
      out.push(labels[p] === 'h' && size('d') === 1 ? 'f' : labels[p]);
      p++;
    } else {
      fail('invalid_option', `${where}.shape`, `a reshape weft can follow of axes [${labels.join(', ')}]`, JSON.stringify(entries));
    }
  }
  if (p !== labels.length) fail('invalid_option', `${where}.shape`, `a shape covering every axis of [${labels.join(', ')}]`, JSON.stringify(entries));
  return { labels: out, sizes: axes.sizes };
}
