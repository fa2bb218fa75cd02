import type { KernelTable } from './kernel-table.js';
import { javascriptKernels } from './kernel-table.js';
import type { LinearMemory } from './memory.js';
import type { KernelWorkspace, ModuleExports } from './module.js';
import { addressing } from './module.js';
import { simdAttentionKernels } from './webassembly-attention.js';
import { simdStepKernels } from './webassembly-steps.js';
import type { FloatArray } from '../dtype.js';
import type { MomentumBuffers, MomentumConstants } from '../kernels/rules.js';
import type { ProductShape } from '../kernels/shapes.js';
import type { ColumnBlock } from '../kernels/columns.js';
import { transposesA, transposesB } from '../kernels/shapes.js';

/** The kernel table over `memory`, calling the training module's exports `x` where the arrays are this memory's. */
export function simdKernelTable(x: ModuleExports, memory: LinearMemory, workspace: KernelWorkspace): KernelTable {
  // Arrays are found by memory.offsetOf (a recorded offset, not `byteOffset`/`buffer`: see memory.ts for why); an array
  // from elsewhere runs on the JavaScript kernel, so the kernels without a twin are the JavaScript ones.
  return {
    ...javascriptKernels,
    ...productKernels(x, memory, workspace),
    ...elementwiseKernels(x, memory),
    ...activationKernels(x, memory),
    ...simdStepKernels(x, memory, workspace),
    ...ruleKernels(x, memory),
    ...simdAttentionKernels(x, memory, workspace),
    ...rowKernels(x, memory, workspace),
  };
}

/** The matrix products. */
function productKernels(x: ModuleExports, memory: LinearMemory, workspace: KernelWorkspace): Pick<KernelTable, 'matmul' | 'matmulInto'> {
  const js = javascriptKernels;
  const { mine, at } = addressing(memory);
  return {
    matmul: (out, a, b, shape) => {
      if (!(mine(out) && mine(a) && mine(b))) return js.matmul(out, a, b, shape);
      product(out, a, b, shape, 0);
      return out;
    },
    matmulInto: (out, a, b, shape) => {
      if (!(mine(out) && mine(a) && mine(b))) return js.matmulInto(out, a, b, shape);
      product(out, a, b, shape, 1);
      return out;
    },
  };

  /** The SIMD product (rows < 4 reads the right operand in place and needs no packing scratch). */
  function product(out: FloatArray, a: FloatArray, b: FloatArray, shape: ProductShape, accumulate: number): void {
    const { rows, inner, cols } = shape;
    const scratch = rows < 4 ? 0 : workspace.scratch((Math.ceil(rows / 4) * 4 + Math.ceil(cols / 8) * 8) * inner + 32);
    x.matmul(at(out), at(a), at(b), rows, inner, cols, +transposesA(shape), +transposesB(shape), accumulate, scratch);
  }
}

/** The elementwise kernels, bias rows and column sums. */
function elementwiseKernels(
  x: ModuleExports,
  memory: LinearMemory,
): Pick<KernelTable, 'add' | 'subtract' | 'multiply' | 'scale' | 'addInto' | 'addScaledInto' | 'multiplyInto' | 'addRow' | 'sumRows' | 'sumRowsInto'> {
  const js = javascriptKernels;
  const { mine, at } = addressing(memory);
  return {
    add: (out, a, b, length) => {
      if (!(mine(out) && mine(a) && mine(b))) return js.add(out, a, b, length);
      x.add(at(out), at(a), at(b), length);
      return out;
    },
    subtract: (out, a, b, length) => {
      if (!(mine(out) && mine(a) && mine(b))) return js.subtract(out, a, b, length);
      x.subtract(at(out), at(a), at(b), length);
      return out;
    },
    multiply: (out, a, b, length) => {
      if (!(mine(out) && mine(a) && mine(b))) return js.multiply(out, a, b, length);
      x.multiply(at(out), at(a), at(b), length);
      return out;
    },
    scale: (out, a, s, length) => {
      if (!(mine(out) && mine(a))) return js.scale(out, a, s, length);
      x.scale(at(out), at(a), s, length);
      return out;
    },
    addInto: (out, a, length) => {
      if (!(mine(out) && mine(a))) return js.addInto(out, a, length);
      x.addInto(at(out), at(a), length);
      return out;
    },
    addScaledInto: (out, a, s, length) => {
      if (!(mine(out) && mine(a))) return js.addScaledInto(out, a, s, length);
      x.addScaledInto(at(out), at(a), s, length);
      return out;
    },
    multiplyInto: (out, a, b, length) => {
      if (!(mine(out) && mine(a) && mine(b))) return js.multiplyInto(out, a, b, length);
      x.multiplyInto(at(out), at(a), at(b), length);
      return out;
    },
    addRow: (out, a, row, rows, cols) => {
      if (!(mine(out) && mine(a) && mine(row))) return js.addRow(out, a, row, rows, cols);
      x.addRow(at(out), at(a), at(row), rows, cols);
      return out;
    },
    sumRows: (out, a, rows, cols) => {
      if (!(mine(out) && mine(a))) return js.sumRows(out, a, rows, cols);
      x.sumRows(at(out), at(a), rows, cols, 0);
      return out;
    },
    sumRowsInto: (out, a, rows, cols) => {
      if (!(mine(out) && mine(a))) return js.sumRowsInto(out, a, rows, cols);
      x.sumRows(at(out), at(a), rows, cols, 1);
      return out;
    },
  };
}

/** The activations and their derivative kernels. */
function activationKernels(x: ModuleExports, memory: LinearMemory): Pick<KernelTable, 'sigmoid' | 'tanh' | 'exp' | 'sigmoidGradientInto' | 'tanhGradientInto'> {
  const js = javascriptKernels;
  const { mine, at } = addressing(memory);
  return {
    sigmoid: (out, a, length) => {
      if (!(mine(out) && mine(a))) return js.sigmoid(out, a, length);
      x.sigmoid(at(out), at(a), length);
      return out;
    },
    tanh: (out, a, length) => {
      if (!(mine(out) && mine(a))) return js.tanh(out, a, length);
      x.tanh(at(out), at(a), length);
      return out;
    },
    exp: (out, a, length) => {
      if (!(mine(out) && mine(a))) return js.exp(out, a, length);
      x.exp(at(out), at(a), length);
      return out;
    },
    sigmoidGradientInto: (inputGradient, outputGradient, y, length) => {
      if (!(mine(inputGradient) && mine(outputGradient) && mine(y))) return js.sigmoidGradientInto(inputGradient, outputGradient, y, length);
      x.sigmoidGradientInto(at(inputGradient), at(outputGradient), at(y), length);
      return inputGradient;
    },
    tanhGradientInto: (inputGradient, outputGradient, y, length) => {
      if (!(mine(inputGradient) && mine(outputGradient) && mine(y))) return js.tanhGradientInto(inputGradient, outputGradient, y, length);
      x.tanhGradientInto(at(inputGradient), at(outputGradient), at(y), length);
      return inputGradient;
    },
  };
}

/** The update rules' loops. */
function ruleKernels(x: ModuleExports, memory: LinearMemory): Pick<KernelTable, 'adamUpdate' | 'sgdUpdate' | 'nesterovUpdate'> {
  const js = javascriptKernels;
  const { mine, at } = addressing(memory);
  return {
    adamUpdate: (buffers, length, constants) => {
      const { values, gradient, firstMoment, secondMoment } = buffers;
      if (!(mine(values) && mine(gradient) && mine(firstMoment) && mine(secondMoment))) return js.adamUpdate(buffers, length, constants);
      const { beta1, beta2, correction1, correction2, rate, decay, kappa, epsilon } = constants;
      x.adamUpdate(at(values), at(gradient), at(firstMoment), at(secondMoment), length, beta1, beta2, correction1, correction2, rate, decay, kappa, epsilon);
    },
    sgdUpdate: (buffers, length, constants) => momentum(buffers, length, constants, 0),
    nesterovUpdate: (buffers, length, constants) => momentum(buffers, length, constants, 1),
  };

  /** Momentum SGD, heavy-ball (`nesterov` 0) or Nesterov's (1). */
  function momentum(buffers: MomentumBuffers, length: number, constants: MomentumConstants, nesterov: number): void {
    const { values, gradient, velocity } = buffers;
    if (!(mine(values) && mine(gradient) && mine(velocity))) {
      if (nesterov === 1) js.nesterovUpdate(buffers, length, constants);
      else js.sgdUpdate(buffers, length, constants);
      return;
    }
    x.sgdUpdate(at(values), at(gradient), at(velocity), length, constants.rate, constants.decay, constants.mu, constants.kappa, nesterov);
  }
}

/** The column-block kernels (kernels/columns.ts). */
type ColumnKernelName = 'copyToColumns' | 'copyFromColumns' | 'addToColumns' | 'addFromColumns';

/**
 * The step's offset copies and sums, the column blocks, the update's checks and the softmax cross-entropy (core/wasm/rows.ts). The
 * reductions return a number, which the module's functions give back as their result.
 */
function rowKernels(
  x: ModuleExports,
  memory: LinearMemory,
  workspace: KernelWorkspace,
): Pick<KernelTable, 'copyAt' | 'addAt' | ColumnKernelName | 'firstNonFinite' | 'sumOfSquares' | 'crossEntropyRows'> {
  const js = javascriptKernels;
  const { mine, at } = addressing(memory);
  const valued = x as unknown as { readonly [name: string]: (...args: number[]) => number };
  /** One of the four column-block kernels: `toWide` and `add` as core/wasm/rows.ts `columns` takes them. */
  const columns =
    (name: ColumnKernelName, toWide: number, add: number) =>
    (first: FloatArray, second: FloatArray, block: ColumnBlock): FloatArray => {
      if (!(mine(first) && mine(second))) return js[name](first, second, block);
      const [wide, narrow] = toWide === 1 ? [first, second] : [second, first];
      x.columns(at(wide), at(narrow), block.rows, block.cols, block.width, block.first, toWide, add);
      return first;
    };
  return {
    copyToColumns: columns('copyToColumns', 1, 0),
    copyFromColumns: columns('copyFromColumns', 0, 0),
    addToColumns: columns('addToColumns', 1, 1),
    addFromColumns: columns('addFromColumns', 0, 1),
    copyAt: (target, targetOffset, source, sourceOffset, length) => {
      if (!(mine(target) && mine(source))) return js.copyAt(target, targetOffset, source, sourceOffset, length);
      x.copyAt(at(target), targetOffset, at(source), sourceOffset, length);
      return target;
    },
    addAt: (target, targetOffset, source, sourceOffset, length) => {
      if (!(mine(target) && mine(source))) return js.addAt(target, targetOffset, source, sourceOffset, length);
      x.addAt(at(target), targetOffset, at(source), sourceOffset, length);
      return target;
    },
    firstNonFinite: (a, length) => (mine(a) ? valued.firstNonFinite(at(a), length) : js.firstNonFinite(a, length)),
    sumOfSquares: (a, length) => (mine(a) ? valued.sumOfSquares(at(a), length) : js.sumOfSquares(a, length)),
    crossEntropyRows: (losses, probabilities, logits, targets, rows, classes) => {
      if (!(mine(losses) && mine(probabilities) && mine(logits))) return js.crossEntropyRows(losses, probabilities, logits, targets, rows, classes);
      x.crossEntropyRows(at(losses), at(probabilities), at(logits), workspace.integers(targets, rows), rows, classes);
      return losses;
    },
  };
}
