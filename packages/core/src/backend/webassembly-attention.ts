/**
 * The WebAssembly backend's wrappers of attention's kernels (kernels/attention.ts): each calls the SIMD twin
 * (core/wasm/attention.ts) with its arrays' byte offsets where every array lives in the backend's memory, else the
 * JavaScript kernel (webassembly-table.ts says why). The softmax within lengths, its backward and the additive form
 * run on the JavaScript kernels over the backend's memory.
 */
import type { KernelTable } from './kernel-table.js';
import { javascriptKernels } from './kernel-table.js';
import type { LinearMemory } from './memory.js';
import type { KernelWorkspace, ModuleExports } from './module.js';
import { addressing } from './module.js';

/** The attention kernels with SIMD twins. */
type AttentionKernelName = 'attentionScores' | 'attentionContext' | 'attentionContextBackward' | 'attentionScoresBackward';

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
  };
}
