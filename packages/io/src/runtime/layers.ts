/**
 * The runtime's recurrent layers: each holds its weights (f32, in the runtime backend's memory) and steps a batch
 * of rows with the same step kernels training uses (the backend's forward kernels), into buffers it was given at
 * creation. Nothing here allocates per step.
 */
import type { ForwardKernels } from '@weft/core/forward/javascript';
import type { LayerDescription } from '@weft/cells/description';

/** A tensor of the weight file in the runtime backend's memory; `matrix` lays a product's weights out for its kernels. */
export type Weights = (name: string, shape: readonly number[], matrix?: boolean) => Float32Array;

/** Per-batch working memory of one layer direction. */
export interface LayerBuffers {
  /** State slots, [rows, hidden] each: h (and c for an LSTM). */
  readonly state: Float32Array[];
  readonly work: Float32Array[];
}

export interface RuntimeCell {
  readonly hidden: number;
  readonly inputWidth: number;
  /** State slot count (2 for an LSTM). */
  readonly slots: number;
  buffers(rows: number, allocate: (length: number) => Float32Array): LayerBuffers;
  /**
   * One step for `rows` rows: reads x [rows, inputWidth], updates the state in place (rows with step ≥ their
   * length keep theirs). The new h is `buffers.state[0]`.
   */
  step(x: Float32Array, buffers: LayerBuffers, rows: number, lengths: Int32Array | null, step: number): void;
}

export function makeCell(layer: LayerDescription, inputWidth: number, prefix: string, weights: Weights, kernels: ForwardKernels): RuntimeCell {
  const hidden = layer.hidden;
  const { gruLayerStep, lstmLayerStep, plainLayerStep } = kernels;
  if (layer.cell === 'lstm') {
    const input = weights(`${prefix}.input`, [inputWidth, 4 * hidden], true);
    const recurrent = weights(`${prefix}.recurrent`, [hidden, 4 * hidden], true);
    const bias = weights(`${prefix}.bias`, [4 * hidden]);
    const peephole = layer.peepholes === true ? weights(`${prefix}.peephole`, [3 * hidden]) : null;
    return {
      hidden,
      inputWidth,
      slots: 2,
      buffers: (rows, allocate) => ({ state: [allocate(rows * hidden), allocate(rows * hidden)], work: [allocate(rows * 4 * hidden), allocate(rows * hidden)] }),
      step(x, buffers, rows, lengths, step) {
        // Indexing, not destructuring: this runs once per layer and step.
        const state = buffers.state;
        const work = buffers.work;
        lstmLayerStep(x, input, recurrent, bias, peephole, state[0], state[1], work[0], work[1], rows, inputWidth, hidden, lengths, step);
      },
    };
  }
  if (layer.cell === 'gru') {
    const resetAfter = layer.resetAfterProduct === true;
    const input = weights(`${prefix}.input`, [inputWidth, 3 * hidden], true);
    const bias = weights(`${prefix}.bias`, [3 * hidden]);
    const recurrent = weights(`${prefix}.recurrent`, [hidden, 2 * hidden], true);
    const candidateWeights = weights(`${prefix}.recurrentCandidate`, [hidden, hidden], true);
    const candidateBias = resetAfter ? weights(`${prefix}.recurrentCandidateBias`, [hidden]) : null;
    return {
      hidden,
      inputWidth,
      slots: 1,
      buffers: (rows, allocate) => ({
        state: [allocate(rows * hidden)],
        work: [allocate(rows * 3 * hidden), allocate(rows * 3 * hidden), allocate(rows * 2 * hidden), allocate(rows * hidden), allocate(rows * hidden)],
      }),
      step(x, buffers, rows, lengths, step) {
        const work = buffers.work;
        gruLayerStep(x, input, bias, recurrent, candidateWeights, candidateBias, buffers.state[0], work[0], work[1], work[2], work[3], work[4], rows, inputWidth, hidden, lengths, step);
      },
    };
  }
  const input = weights(`${prefix}.input`, [inputWidth, hidden], true);
  const recurrent = weights(`${prefix}.recurrent`, [hidden, hidden], true);
  const bias = weights(`${prefix}.bias`, [hidden]);
  const rectified = layer.activation === 'relu';
  return {
    hidden,
    inputWidth,
    slots: 1,
    buffers: (rows, allocate) => ({ state: [allocate(rows * hidden)], work: [allocate(rows * hidden)] }),
    step(x, buffers, rows, lengths, step) {
      plainLayerStep(x, input, recurrent, bias, buffers.state[0], buffers.work[0], rectified, rows, inputWidth, hidden, lengths, step);
    },
  };
}
