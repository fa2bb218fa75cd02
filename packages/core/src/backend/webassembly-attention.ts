/**
 * The WebAssembly backend's wrappers of attention's kernels (kernels/attention.ts): each calls the SIMD twin
 * (core/wasm/attention.ts) with its arrays' byte offsets where every array lives in the backend's memory, else the
 * JavaScript kernel (webassembly-table.ts says why). The softmax within lengths and its backward (a few numbers per
 * score) run on the JavaScript kernels over the backend's memory.
 */
import type { KernelTable } from './kernel-table.js';
import { javascriptKernels } from './kernel-table.js';
import type { LinearMemory } from './memory.js';
import type { KernelWorkspace, ModuleExports } from './module.js';
import { addressing } from './module.js';

/** The attention kernels with SIMD twins. */
type AttentionKernelName =
  | 'attentionScores'
  | 'attentionScoresAdditive'
  | 'attentionContext'
  | 'attentionContextBackward'
  | 'attentionScoresBackward'
  | 'attentionScoresAdditiveBackward';

/** The attention kernels over `memory`, calling the training module's exports `x` where the arrays are this memory's. */
export function simdAttentionKernels(x: ModuleExports, memory: LinearMemory, workspace: KernelWorkspace): Pick<KernelTable, AttentionKernelName> {
  const js = javascriptKernels;
  const { mine, mineOrNull, at, pointer } = addressing(memory);
  return {
    attentionScores: (scores, query, keys, shape) => {
      if (!(mine(scores) && mine(query) && mine(keys))) return js.attentionScores(scores, query, keys, shape);
      const { steps, rows, sources, depth, lengths } = shape;
      x.attentionScores(at(scores), at(query), at(keys), steps, rows, sources, depth, workspace.lengths(lengths, rows));
      return scores;
    },
    attentionScoresAdditive: (scores, inputs, shape) => {
      const { query, keys, vector } = inputs;
      if (!(mine(scores) && mine(query) && mine(keys) && mine(vector))) return js.attentionScoresAdditive(scores, inputs, shape);
      const { steps, rows, sources, depth, lengths } = shape;
      x.attentionScoresAdditive(at(scores), at(query), at(keys), at(vector), steps, rows, sources, depth, workspace.lengths(lengths, rows));
      return scores;
    },
    attentionContext: (context, weights, values, shape) => {
      if (!(mine(context) && mine(weights) && mine(values))) return js.attentionContext(context, weights, values, shape);
      const { steps, rows, sources, width, lengths } = shape;
      x.attentionContext(at(context), at(weights), at(values), steps, rows, sources, width, workspace.lengths(lengths, rows));
      return context;
    },
    attentionContextBackward: (weightGradient, valueGradient, arriving, weights, values, shape) => {
      if (!(mine(weightGradient) && mineOrNull(valueGradient) && mine(arriving) && mine(weights) && mine(values))) {
        return js.attentionContextBackward(weightGradient, valueGradient, arriving, weights, values, shape);
      }
      const { steps, rows, sources, width, lengths } = shape;
      x.attentionContextBackward(
        at(weightGradient),
        pointer(valueGradient),
        at(arriving),
        at(weights),
        at(values),
        steps,
        rows,
        sources,
        width,
        workspace.lengths(lengths, rows),
      );
      return weightGradient;
    },
    attentionScoresBackward: (queryGradient, keyGradient, scoreGradient, query, keys, shape) => {
      if (!(mineOrNull(queryGradient) && mineOrNull(keyGradient) && mine(scoreGradient) && mine(query) && mine(keys))) {
        js.attentionScoresBackward(queryGradient, keyGradient, scoreGradient, query, keys, shape);
        return;
      }
      const { steps, rows, sources, depth, lengths } = shape;
      x.attentionScoresBackward(
        pointer(queryGradient),
        pointer(keyGradient),
        at(scoreGradient),
        at(query),
        at(keys),
        steps,
        rows,
        sources,
        depth,
        workspace.lengths(lengths, rows),
      );
    },
    attentionScoresAdditiveBackward: (gradients, scoreGradient, inputs, shape) => {
      const { query, keys, vector } = inputs;
      const ours = mineOrNull(gradients.query) && mineOrNull(gradients.keys) && mineOrNull(gradients.vector) && mine(scoreGradient);
      if (!(ours && mine(query) && mine(keys) && mine(vector))) {
        js.attentionScoresAdditiveBackward(gradients, scoreGradient, inputs, shape);
        return;
      }
      const { steps, rows, sources, depth, lengths } = shape;
      x.attentionScoresAdditiveBackward(
        pointer(gradients.query),
        pointer(gradients.keys),
        pointer(gradients.vector),
        at(scoreGradient),
        at(query),
        at(keys),
        at(vector),
        steps,
        rows,
        sources,
        depth,
        workspace.lengths(lengths, rows),
      );
    },
  };
}
