/**
 * A cell run by the inference runtime: its weights in the runtime backend's memory, stepping a batch of rows into
 * buffers made once, with nothing allocated per step. Any plan runs through its traced program (each operation
 * on the runtime's kernels or a plain loop over the buffers); the three built-in cells run instead through one
 * whole-layer kernel call per step (a streaming step crosses into WebAssembly once per layer), which computes the
 * same equations as their plans (the runtime tests compare both with the training model).
 */
import { logistic, productShape, refill } from '@weft/core/base';
import type { ForwardKernels } from '@weft/core/forward/javascript';
import type { CellPlan, CellShape, StepProgram } from './plan.js';
import { traceStep } from './trace.js';
import type { GruWeights, GruWork, LayerStepAt, LstmState, LstmWeights, LstmWork, PlainWeights, ProductShape } from '@weft/core/base';

/** A tensor of the weight file in the runtime backend's memory; `matrix` lays a product's weights out for its kernels. */
export type Weights = (name: string, shape: readonly number[], matrix?: boolean) => Float32Array;

/** Per-batch working memory of one layer direction. */
export interface LayerBuffers {
  /** State slots, [rows, width] each: h (and c for an LSTM). */
  readonly state: Float32Array[];
  /** Working memory of the step. */
  readonly work: Float32Array[];
}

/** One direction's cell of a layer, as the runtime runs it. */
export interface RuntimeCell {
  /** The layer's hidden size (the output slot's width). */
  readonly hidden: number;
  /** Features per row read at each step. */
  readonly inputWidth: number;
  /** The width of each state slot, in order. */
  readonly slotWidths: readonly number[];
  /** Working memory for `rows` rows, from `allocate`. */
  buffers(rows: number, allocate: (length: number) => Float32Array): LayerBuffers;
  /**
   * One step for `rows` rows: reads x [rows, inputWidth], updates the state in place (rows with step ≥ their
   * length keep theirs). The new h is `buffers.state[0]`.
   */
  step(x: Float32Array, buffers: LayerBuffers, rows: number, lengths: Int32Array | null, step: number): void;
}

/** The runtime's cell for `plan` at `shape`, its parameters named `prefix.<name>` and taken from `weights`. */
export function runtimeCell(plan: CellPlan, shape: CellShape, prefix: string, weights: Weights, kernels: ForwardKernels): RuntimeCell {
  const fused = plan.kind === 'lstm' || plan.kind === 'gru' || plan.kind === 'plain' ? wholeLayerCell(plan.kind, shape, prefix, weights, kernels) : null;
  return fused ?? programCell(traceStep(plan, shape, prefix), prefix, weights, kernels);
}

function wholeLayerCell(kind: 'lstm' | 'gru' | 'plain', shape: CellShape, prefix: string, weights: Weights, kernels: ForwardKernels): RuntimeCell {
  const { inputWidth, hidden, layer } = shape;
  if (kind === 'lstm') {
    const input = weights(`${prefix}.input`, [inputWidth, 4 * hidden], true);
    const recurrent = weights(`${prefix}.recurrent`, [hidden, 4 * hidden], true);
    const bias = weights(`${prefix}.bias`, [4 * hidden]);
    const peephole = layer.peepholes === true ? weights(`${prefix}.peephole`, [3 * hidden]) : null;
    const lstmLayerStep = kernels.lstmLayerStep;
    // The kernel's argument records, made once for the layer and refilled from the batch's buffers per step.
    const matrices: LstmWeights = { input, recurrent, bias, peephole };
    const state: LstmState = { h: input, c: input };
    const work: LstmWork = { gates: input, tanhCell: input };
    const at = layerPlace(inputWidth, hidden);
    return {
      hidden,
      inputWidth,
      slotWidths: [hidden, hidden],
      buffers: (rows, allocate) => ({
        state: [allocate(rows * hidden), allocate(rows * hidden)],
        work: [allocate(rows * 4 * hidden), allocate(rows * hidden)],
      }),
      step(x, buffers, rows, lengths, step) {
        // Indexing, not destructuring: this runs once per layer and step.
        state.h = buffers.state[0];
        state.c = buffers.state[1];
        work.gates = buffers.work[0];
        work.tanhCell = buffers.work[1];
        lstmLayerStep(state, x, matrices, work, refillLayerStep(at, rows, lengths, step));
      },
    };
  }
  if (kind === 'gru') {
    const input = weights(`${prefix}.input`, [inputWidth, 3 * hidden], true);
    const bias = weights(`${prefix}.bias`, [3 * hidden]);
    const recurrent = weights(`${prefix}.recurrent`, [hidden, 2 * hidden], true);
    const candidateWeights = weights(`${prefix}.recurrentCandidate`, [hidden, hidden], true);
    const candidateBias = layer.resetAfterProduct === true ? weights(`${prefix}.recurrentCandidateBias`, [hidden]) : null;
    const gruLayerStep = kernels.gruLayerStep;
    const matrices: GruWeights = { input, bias, recurrent, candidate: candidateWeights, candidateBias };
    const work: GruWork = { projected: input, gates: input, updateReset: input, candidate: input, resetHidden: input };
    const at = layerPlace(inputWidth, hidden);
    return {
      hidden,
      inputWidth,
      slotWidths: [hidden],
      buffers: (rows, allocate) => ({
        state: [allocate(rows * hidden)],
        work: [allocate(rows * 3 * hidden), allocate(rows * 3 * hidden), allocate(rows * 2 * hidden), allocate(rows * hidden), allocate(rows * hidden)],
      }),
      step(x, buffers, rows, lengths, step) {
        const buffer = buffers.work;
        work.projected = buffer[0];
        work.gates = buffer[1];
        work.updateReset = buffer[2];
        work.candidate = buffer[3];
        work.resetHidden = buffer[4];
        gruLayerStep(buffers.state[0], x, matrices, work, refillLayerStep(at, rows, lengths, step));
      },
    };
  }
  const input = weights(`${prefix}.input`, [inputWidth, hidden], true);
  const recurrent = weights(`${prefix}.recurrent`, [hidden, hidden], true);
  const bias = weights(`${prefix}.bias`, [hidden]);
  const activation = layer.activation === 'relu' ? 'relu' : 'tanh';
  const plainLayerStep = kernels.plainLayerStep;
  const matrices: PlainWeights = { input, recurrent, bias };
  const at = layerPlace(inputWidth, hidden);
  return {
    hidden,
    inputWidth,
    slotWidths: [hidden],
    buffers: (rows, allocate) => ({ state: [allocate(rows * hidden)], work: [allocate(rows * hidden)] }),
    step(x, buffers, rows, lengths, step) {
      plainLayerStep(buffers.state[0], x, matrices, buffers.work[0], activation, refillLayerStep(at, rows, lengths, step));
    },
  };
}

/** A whole-layer step's place record for a layer of these widths (rows, lengths and step are refilled per step). */
function layerPlace(inputWidth: number, hidden: number): LayerStepAt {
  return { rows: 0, inputWidth, hidden, lengths: null, step: 0 };
}

/** Refills a layer's place record for one step and returns it. */
function refillLayerStep(at: LayerStepAt, rows: number, lengths: Int32Array | null, step: number): LayerStepAt {
  at.rows = rows;
  at.lengths = lengths;
  at.step = step;
  return at;
}

/** A traced program laid out once for the runtime: where each value lives, its width, and each product's matrix. */
interface ProgramLayout {
  /** Each value's source (SOURCE_*). */
  readonly sources: Int32Array;
  /** Each value's slot, vector index or working-buffer index. */
  readonly place: Int32Array;
  /** The vector parameters, by their index. */
  readonly vectors: readonly Float32Array[];
  /** 1 for a value that is a row (one for every batch row), else 0. */
  readonly rowValue: Uint8Array;
  /** Each value's width. */
  readonly widths: Int32Array;
  /** Each instruction's weight matrix (products), else null. */
  readonly matrices: readonly (Float32Array | null)[];
  /** The instructions, in order. */
  readonly instructions: StepProgram['instructions'];
  /** The new state's values, in slot order. */
  readonly results: Int32Array;
  /** The state slots' widths. */
  readonly slotWidths: readonly number[];
  /** The widest product's columns (the zero bias's length). */
  readonly widestProduct: number;
  /** The runtime's kernels. */
  readonly kernels: ForwardKernels;
  /** The products' size record, refilled per product. */
  readonly product: ProductShape;
}

const SOURCE_INPUT = 0;
const SOURCE_STATE = 1;
const SOURCE_VECTOR = 2;
const SOURCE_COMPUTED = 3;

/** Lays a traced program out, its parameters taken from `weights` as `prefix.<name>`. */
function programLayout(program: StepProgram, prefix: string, weights: Weights, kernels: ForwardKernels): ProgramLayout {
  const values = program.values;
  const sources = Int32Array.from(values, (v) =>
    v.source === 'input' ? SOURCE_INPUT : v.source === 'state' ? SOURCE_STATE : v.source === 'vector' ? SOURCE_VECTOR : SOURCE_COMPUTED,
  );
  const place = new Int32Array(values.length);
  const parameterArrays = new Map<string, Float32Array>();
  for (const p of program.parameters) parameterArrays.set(p.name, weights(`${prefix}.${p.name}`, p.shape, p.shape.length === 2));
  const vectors: Float32Array[] = [];
  let computed = 0;
  values.forEach((v, id) => {
    if (v.source === 'state') place[id] = v.slot;
    else if (v.source === 'vector') place[id] = vectors.push(parameterArrays.get(v.name) as Float32Array) - 1;
    else if (v.source === 'computed') place[id] = computed++;
  });
  const widths = Int32Array.from(values, (v) => v.width);
  const instructions = program.instructions;
  return {
    sources,
    place,
    vectors,
    rowValue: Uint8Array.from(values, (v) => (v.row ? 1 : 0)),
    widths,
    matrices: instructions.map((i) => (i.operation === 'product' ? (parameterArrays.get(i.weights) as Float32Array) : null)),
    instructions,
    results: Int32Array.from(program.results),
    slotWidths: program.state.map((s) => s.width),
    widestProduct: Math.max(1, ...instructions.map((i) => (i.operation === 'product' ? widths[i.out] : 0))),
    kernels,
    product: productShape(0, 0, 0),
  };
}

/**
 * A cell run through its traced program. Each computed value has a buffer ([rows, width], or [width] for a row);
 * products run on the backend's affine kernel with a zero bias (so they read its packed weight matrices), the
 * rest are loops over the buffers. The new state is written into the slots after the whole step, so every
 * operation reads the state from before it.
 */
function programCell(program: StepProgram, prefix: string, weights: Weights, kernels: ForwardKernels): RuntimeCell {
  const layout = programLayout(program, prefix, weights, kernels);
  return {
    hidden: program.hidden,
    inputWidth: program.inputWidth,
    slotWidths: layout.slotWidths,
    buffers(rows, allocate) {
      const state = layout.slotWidths.map((w) => allocate(rows * w));
      const work: Float32Array[] = [];
      program.values.forEach((v) => {
        if (v.source === 'computed') work.push(allocate(v.row ? v.width : rows * v.width));
      });
      // The zero bias of every product, last.
      work.push(allocate(layout.widestProduct));
      return { state, work };
    },
    step(x, buffers, rows, lengths, step) {
      for (let k = 0; k < layout.instructions.length; k++) runInstruction(layout, k, x, buffers, rows);
      writeState(layout, buffers, rows, lengths, step);
    },
  };
}

/** Instruction `k` of a laid-out program, for `rows` rows, into its working buffer. */
function runInstruction(layout: ProgramLayout, k: number, x: Float32Array, buffers: LayerBuffers, rows: number): void {
  const { widths, rowValue } = layout;
  const work = buffers.work;
  const instruction = layout.instructions[k];
  const out = work[layout.place[instruction.out]];
  const a = pick(instruction.a, layout, buffers, x);
  const width = widths[instruction.out];
  const n = (rowValue[instruction.out] === 1 ? 1 : rows) * width;
  switch (instruction.operation) {
    case 'product':
      layout.kernels.affineRows(out, a, layout.matrices[k] as Float32Array, work[work.length - 1], refill(layout.product, rows, widths[instruction.a], width));
      break;
    case 'add':
    case 'subtract':
    case 'multiply':
      elementwise(instruction.operation, out, a, pick(instruction.b, layout, buffers, x), n, rowValue[instruction.b] === 1 ? width : n);
      break;
    case 'sigmoid':
      for (let i = 0; i < n; i++) out[i] = logistic(a[i]);
      break;
    case 'tanh':
      for (let i = 0; i < n; i++) out[i] = Math.tanh(a[i]);
      break;
    case 'relu':
      for (let i = 0; i < n; i++) out[i] = a[i] > 0 ? a[i] : 0;
      break;
    case 'columns': {
      const from = widths[instruction.a];
      const count = n / width;
      for (let r = 0; r < count; r++) for (let j = 0; j < width; j++) out[r * width + j] = a[r * from + instruction.start + j];
      break;
    }
  }
}

/** The new state into the slots; rows past their length hold theirs. */
function writeState(layout: ProgramLayout, buffers: LayerBuffers, rows: number, lengths: Int32Array | null, step: number): void {
  const { results, slotWidths, place } = layout;
  for (let s = 0; s < results.length; s++) {
    const slot = buffers.state[s];
    const next = buffers.work[place[results[s]]];
    const width = slotWidths[s];
    for (let r = 0; r < rows; r++) {
      if (lengths !== null && step >= lengths[r]) continue;
      for (let j = r * width; j < (r + 1) * width; j++) slot[j] = next[j];
    }
  }
}

/** The array of value `id` (a function of the module, not a closure: the step makes no object). */
function pick(id: number, layout: ProgramLayout, buffers: LayerBuffers, x: Float32Array): Float32Array {
  const source = layout.sources[id];
  if (source === SOURCE_COMPUTED) return buffers.work[layout.place[id]];
  if (source === SOURCE_STATE) return buffers.state[layout.place[id]];
  return source === SOURCE_VECTOR ? layout.vectors[layout.place[id]] : x;
}

/** out = a ∘ b over n numbers, b repeating every `period` numbers (a row broadcast) or not (period = n). */
function elementwise(operation: 'add' | 'subtract' | 'multiply', out: Float32Array, a: Float32Array, b: Float32Array, n: number, period: number): void {
  for (let i = 0, j = 0; i < n; i++, j = j + 1 === period ? 0 : j + 1) {
    out[i] = operation === 'add' ? a[i] + b[j] : operation === 'subtract' ? a[i] - b[j] : a[i] * b[j];
  }
}
