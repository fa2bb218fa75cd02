/**
 * The inference runtime's backend: the forward kernels alone (no tape, no reverse sweep, no update rules) and the
 * memory they compute in, so a runtime bundle carries only what it runs. Two exist, as for training: JavaScript
 * (the kernels of core/src/kernels over ordinary typed arrays) here, and WebAssembly SIMD in
 * forward-webassembly.ts (a module of its own, core/wasm/runtime.ts, with the forward twins only).
 */
import { attentionContext, attentionScores, attentionScoresAdditive, softmaxWithinLengths } from '../kernels/attention.js';
import { gruLayerStep } from '../kernels/gru-step.js';
import { lstmLayerStep } from '../kernels/lstm-step.js';
import { affineRows } from '../kernels/matmul.js';
import { plainLayerStep } from '../kernels/plain-step.js';
import type { BackendName } from './backend.js';

/**
 * The forward kernel table: the readout's affine map, and one whole step per built-in cell's layer. Weight matrices
 * (`input`, `recurrent`, `candidateWeights`, the readout's `weights`) are the backend's `matrix(...)` arrays.
 */
export interface ForwardKernels {
  /** The readout: rows × weights + bias. */
  readonly affineRows: typeof affineRows;
  /** One LSTM step for every stream of a layer. */
  readonly lstmLayerStep: typeof lstmLayerStep;
  /** One GRU step for every stream of a layer. */
  readonly gruLayerStep: typeof gruLayerStep;
  /** One plain-cell step for every stream of a layer. */
  readonly plainLayerStep: typeof plainLayerStep;
}

/** The forward attention kernels (kernels/attention.ts), for the decoding of an encoder-decoder. */
export interface ForwardAttentionKernels {
  /** The dot-form scores. */
  readonly attentionScores: typeof attentionScores;
  /** The additive-form scores. */
  readonly attentionScoresAdditive: typeof attentionScoresAdditive;
  /** The weights: the softmax of each row's scores within its sources. */
  readonly softmaxWithinLengths: typeof softmaxWithinLengths;
  /** The context: the values weighted by the weights. */
  readonly attentionContext: typeof attentionContext;
}

/**
 * The attention kernels of both forward backends: the JavaScript ones, which compute on any f32 array, the
 * WebAssembly backend's memory included. A decoding step attends over one source for its few rows (a beam), a small
 * share of the step, so the runtime module carries no twins of them. They are a table of their own, not part of
 * ForwardKernels, so that only the encoder-decoder's runtime bundle carries them.
 */
export const forwardAttentionKernels: ForwardAttentionKernels = /* @__PURE__ */ Object.freeze({
  attentionScores,
  attentionScoresAdditive,
  softmaxWithinLengths,
  attentionContext,
});

export type ForwardKernelName = keyof ForwardKernels;

/** The backend of the inference runtime: forward kernels only, over f32 arrays in its own memory. */
export interface ForwardBackend {
  /** Which backend this is. */
  readonly name: BackendName;
  /** Its forward kernels. */
  readonly kernels: ForwardKernels;
  /** An f32 array in this backend's memory, zeroed. */
  floats(length: number): Float32Array;
  /**
   * A weight matrix [rows, cols] (row-major `values`) laid out as this backend's layer-step kernels read it: as it
   * is for JavaScript, packed into 8-column panels for WebAssembly. Only the forward kernels read the result.
   */
  matrix(values: ArrayLike<number>, rows: number, cols: number): Float32Array;
  /** Gives back an array made by `floats` that nothing uses any more. */
  release(array: Float32Array): void;
  /** A line for messages and `weft inspect`: the backend and its memory. */
  describe(): string;
}

/** The runtime's JavaScript forward backend (no WebAssembly; ordinary typed arrays). */
export const javascriptForward: ForwardBackend = Object.freeze({
  name: 'javascript' as const,
  kernels: Object.freeze({ affineRows, lstmLayerStep, gruLayerStep, plainLayerStep }),
  floats(length: number): Float32Array {
    return new Float32Array(length);
  },
  matrix(values: ArrayLike<number>): Float32Array {
    return Float32Array.from(values);
  },
  release(): void {
    // Ordinary arrays are collected by the garbage collector.
  },
  describe(): string {
    return 'javascript (typed-array kernels)';
  },
});
