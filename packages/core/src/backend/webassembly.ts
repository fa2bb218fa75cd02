/**
 * The WebAssembly SIMD backend (f32): the kernels of core/wasm (AssemblyScript, compiled by scripts/build-wasm.mjs
 * and shipped as base64 inside the build output) over one LinearMemory that never grows (see memory.ts for why
 * that keeps every view valid).
 *
 * Each table entry checks that its arrays live in this backend's memory and then calls the SIMD twin with their
 * byte offsets; otherwise (f64 arrays, or an ordinary f32 array that reached a kernel) it runs the JavaScript
 * kernel, which computes the same thing on any typed array. Ops check their tensors at the boundary, so mixing
 * tensors of two backends is refused there, not papered over here. Kernels without a SIMD twin (reductions, the
 * softmax cross-entropy, ReLU, log, the offset copies) are the JavaScript kernels working on this memory.
 *
 * Scratch: the matrix product's packed panels and a copy of a ragged batch's lengths live in blocks of this memory
 * that grow to the largest size asked of them (old blocks go back to the memory for reuse).
 */
import { fail } from '../errors.js';
import type { FloatArray } from '../dtype.js';
import { BufferPool } from '../pool.js';
import type { Backend } from './backend.js';
import { registerMemory } from './backend.js';
import type { KernelTable } from './kernel-table.js';
import { javascriptKernels } from './kernel-table.js';
import { LinearMemory } from './memory.js';
import { KernelWorkspace, checkReservation, compileModule, moduleUnavailable } from './module.js';
import { trainingModuleBase64 } from './wasm-training.generated.js';

type Pointer = number;
type Kernel = (...args: number[]) => void;

/** The functions of the training module, by name. */
interface TrainingExports {
  readonly [name: string]: Kernel;
}

/** Options of a WebAssembly SIMD backend. */
export interface WebAssemblyBackendOptions {
  /** Bytes of WebAssembly memory to reserve for tensors and scratch (default 256 MiB; address space, see memory.ts). */
  readonly memoryBytes?: number;
}

const DEFAULT_MEMORY_BYTES = 256 * 1024 * 1024;

let compiled: WebAssembly.Module | null = null;

/** Why a WebAssembly SIMD backend cannot be made here, or null when it can. */
export function webAssemblyUnavailable(): string | null {
  return moduleUnavailable(trainingModuleBase64);
}

/**
 * The compiled kernels of this backend (compiled on first use): a training thread is handed them at its start
 * (`useCompiledKernels`), so it runs the code this thread has already compiled and tiered up instead of compiling
 * its own. Throws a `WeftError` where SIMD modules cannot run.
 */
export function compiledKernels(): WebAssembly.Module {
  compiled ??= compileModule(trainingModuleBase64);
  return compiled;
}

/**
 * Uses kernels compiled in another thread (`compiledKernels` there, sent in a message) for the WebAssembly
 * backends made from now on in this one; kernels already compiled here stay as they are.
 */
export function useCompiledKernels(module: WebAssembly.Module): void {
  if (!(module instanceof WebAssembly.Module)) fail('invalid_argument', 'useCompiledKernels.module', 'a WebAssembly.Module (from compiledKernels)', typeof module);
  compiled ??= module;
}

/**
 * Makes a WebAssembly SIMD backend with a memory of its own, reserved now and never grown; throws a `WeftError` where
 * SIMD modules cannot run (see `webAssemblyUnavailable`).
 */
export function createWebAssemblyBackend(options: WebAssemblyBackendOptions = {}): Backend {
  const bytes = checkReservation(options.memoryBytes ?? DEFAULT_MEMORY_BYTES, 'webassembly backend.memoryBytes');
  return new WebAssemblyBackend(bytes, compiledKernels());
}

class WebAssemblyBackend implements Backend {
  readonly name = 'webassembly' as const;
  readonly kernels: KernelTable;
  readonly pool: BufferPool;
  readonly memory: LinearMemory;
  private readonly pools: BufferPool[] = [];
  private readonly exports: TrainingExports;
  private readonly workspace: KernelWorkspace;

  constructor(bytes: number, compiled: WebAssembly.Module) {
    this.memory = new LinearMemory(bytes);
    const instance = new WebAssembly.Instance(compiled, { env: { memory: this.memory.memory } });
    this.exports = instance.exports as unknown as TrainingExports;
    const memory = this.memory;
    // When the reservation runs out, every pool's unused f32 blocks go back to the memory first (memory.ts).
    memory.whenExhausted = () => {
      for (const pool of this.pools) pool.releaseFree((array) => memory.release(memory.offsetOf(array), array.length * 4));
    };
    this.pool = this.createPool();
    this.workspace = new KernelWorkspace(memory);
    registerMemory(memory.buffer, this);
    this.kernels = Object.freeze(this.table());
  }

  createPool(): BufferPool {
    const memory = this.memory;
    const pool = new BufferPool((dtype, length) => (dtype === 'f64' ? new Float64Array(length) : memory.floats(length)));
    this.pools.push(pool);
    return pool;
  }

  holds(array: FloatArray): boolean {
    return array instanceof Float64Array || this.memory.offsetOf(array) >= 0;
  }

  describe(): string {
    return `webassembly (f32x4 SIMD kernels, ${Math.round(this.memory.reservedBytes / 1048576)} MiB reserved)`;
  }

  private scratch(floats: number): Pointer {
    return this.workspace.scratch(floats);
  }

  private lengths(lengths: Int32Array | null, rows: number): Pointer {
    return this.workspace.lengths(lengths, rows);
  }

  private table(): KernelTable {
    const js = javascriptKernels;
    const x = this.exports;
    const memory = this.memory;
    // Arrays are found by memory.offsetOf (a recorded offset, not `byteOffset`/`buffer`: see memory.ts for why).
    const mine = (a: FloatArray): boolean => memory.offsetOf(a) >= 0;
    const mineOrNull = (a: FloatArray | null): boolean => a === null || memory.offsetOf(a) >= 0;
    const at = (a: FloatArray | Int32Array): Pointer => memory.offsetOf(a);
    const pointer = (a: FloatArray | Int32Array | null): Pointer => (a === null ? 0 : memory.offsetOf(a));
    return {
      ...js,
      matmul: (out, a, b, rows, inner, cols, transposeA = false, transposeB = false, accumulate = false) => {
        if (!(mine(out) && mine(a) && mine(b))) return js.matmul(out, a, b, rows, inner, cols, transposeA, transposeB, accumulate);
        const scratch = rows < 4 ? 0 : this.scratch((Math.ceil(rows / 4) * 4 + Math.ceil(cols / 8) * 8) * inner + 32);
        x.matmul(at(out), at(a), at(b), rows, inner, cols, +transposeA, +transposeB, +accumulate, scratch);
        return out;
      },
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
      sumRows: (out, a, rows, cols, accumulate = false) => {
        if (!(mine(out) && mine(a))) return js.sumRows(out, a, rows, cols, accumulate);
        x.sumRows(at(out), at(a), rows, cols, +accumulate);
        return out;
      },
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
      lstmStepForward: (hState, cell, gates, tanhCell, hPrevious, cellPrevious, peephole, rows, hidden, lengths, step) => {
        if (!(mine(hState) && mine(cell) && mine(gates) && mine(tanhCell) && mine(hPrevious) && mine(cellPrevious) && mineOrNull(peephole))) {
          return js.lstmStepForward(hState, cell, gates, tanhCell, hPrevious, cellPrevious, peephole, rows, hidden, lengths, step);
        }
        x.lstmStepForward(at(hState), at(cell), at(gates), at(tanhCell), at(hPrevious),
          at(cellPrevious), pointer(peephole), rows, hidden, this.lengths(lengths, rows), step);
      },
      lstmStepBackward: (gateGradient, hiddenPreviousGradient, cellPreviousGradient, peepholeGradient, hiddenGradient, cellGradient,
        gates, tanhCell, cellPrevious, cell, peephole, rows, hidden, lengths, step) => {
        if (!(mine(gateGradient) && mineOrNull(hiddenPreviousGradient) && mineOrNull(cellPreviousGradient) && mineOrNull(peepholeGradient)
          && mineOrNull(hiddenGradient) && mineOrNull(cellGradient) && mine(gates) && mine(tanhCell) && mine(cellPrevious) && mine(cell)
          && mineOrNull(peephole))) {
          return js.lstmStepBackward(gateGradient, hiddenPreviousGradient, cellPreviousGradient, peepholeGradient, hiddenGradient,
            cellGradient, gates, tanhCell, cellPrevious, cell, peephole, rows, hidden, lengths, step);
        }
        x.lstmStepBackward(at(gateGradient), pointer(hiddenPreviousGradient), pointer(cellPreviousGradient), pointer(peepholeGradient),
          pointer(hiddenGradient), pointer(cellGradient), at(gates), at(tanhCell), at(cellPrevious), at(cell),
          pointer(peephole), rows, hidden, this.lengths(lengths, rows), step);
      },
      gruUpdateReset: (gates, projected, projectedOffset, recurrentGates, rows, hidden) => {
        if (!(mine(gates) && mine(projected) && mine(recurrentGates))) return js.gruUpdateReset(gates, projected, projectedOffset, recurrentGates, rows, hidden);
        x.gruUpdateReset(at(gates), at(projected), projectedOffset, at(recurrentGates), rows, hidden);
      },
      gruResetHidden: (resetHidden, gates, hPrevious, rows, hidden) => {
        if (!(mine(resetHidden) && mine(gates) && mine(hPrevious))) return js.gruResetHidden(resetHidden, gates, hPrevious, rows, hidden);
        x.gruResetHidden(at(resetHidden), at(gates), at(hPrevious), rows, hidden);
      },
      gruStepFinish: (hState, gates, projected, projectedOffset, candidate, hPrevious, resetAfter, rows, hidden, lengths, step) => {
        if (!(mine(hState) && mine(gates) && mine(projected) && mine(candidate) && mine(hPrevious))) {
          return js.gruStepFinish(hState, gates, projected, projectedOffset, candidate, hPrevious, resetAfter, rows, hidden, lengths, step);
        }
        x.gruStepFinish(at(hState), at(gates), at(projected), projectedOffset, at(candidate),
          at(hPrevious), +resetAfter, rows, hidden, this.lengths(lengths, rows), step);
      },
      gruBackwardCandidate: (updateResetGradient, candidateGradient, productGradient, hiddenPreviousGradient, hiddenGradient, gates,
        candidate, hPrevious, resetAfter, rows, hidden, lengths, step) => {
        if (!(mine(updateResetGradient) && mine(candidateGradient) && mine(productGradient) && mineOrNull(hiddenPreviousGradient)
          && mine(hiddenGradient) && mine(gates) && mine(candidate) && mine(hPrevious))) {
          return js.gruBackwardCandidate(updateResetGradient, candidateGradient, productGradient, hiddenPreviousGradient, hiddenGradient,
            gates, candidate, hPrevious, resetAfter, rows, hidden, lengths, step);
        }
        x.gruBackwardCandidate(at(updateResetGradient), at(candidateGradient), at(productGradient),
          pointer(hiddenPreviousGradient), at(hiddenGradient), at(gates), at(candidate), at(hPrevious),
          +resetAfter, rows, hidden, this.lengths(lengths, rows), step);
      },
      gruBackwardReset: (updateResetGradient, hiddenPreviousGradient, resetHiddenGradient, gates, hPrevious, rows, hidden, lengths, step) => {
        if (!(mine(updateResetGradient) && mineOrNull(hiddenPreviousGradient) && mine(resetHiddenGradient) && mine(gates) && mine(hPrevious))) {
          return js.gruBackwardReset(updateResetGradient, hiddenPreviousGradient, resetHiddenGradient, gates, hPrevious, rows, hidden, lengths, step);
        }
        x.gruBackwardReset(at(updateResetGradient), pointer(hiddenPreviousGradient), at(resetHiddenGradient), at(gates),
          at(hPrevious), rows, hidden, this.lengths(lengths, rows), step);
      },
      plainStepForward: (hState, hPrevious, rectified, rows, hidden, lengths, step) => {
        if (!(mine(hState) && mine(hPrevious))) return js.plainStepForward(hState, hPrevious, rectified, rows, hidden, lengths, step);
        x.plainStepForward(at(hState), at(hPrevious), +rectified, rows, hidden, this.lengths(lengths, rows), step);
      },
      plainStepBackward: (preGradient, hiddenPreviousGradient, hiddenGradient, hState, rectified, rows, hidden, lengths, step) => {
        if (!(mine(preGradient) && mineOrNull(hiddenPreviousGradient) && mine(hiddenGradient) && mine(hState))) {
          return js.plainStepBackward(preGradient, hiddenPreviousGradient, hiddenGradient, hState, rectified, rows, hidden, lengths, step);
        }
        x.plainStepBackward(at(preGradient), pointer(hiddenPreviousGradient), at(hiddenGradient), at(hState),
          +rectified, rows, hidden, this.lengths(lengths, rows), step);
      },
      adamUpdate: (values, gradient, firstMoment, secondMoment, length, beta1, beta2, correction1, correction2, rate, decay, kappa, epsilon) => {
        if (!(mine(values) && mine(gradient) && mine(firstMoment) && mine(secondMoment))) {
          return js.adamUpdate(values, gradient, firstMoment, secondMoment, length, beta1, beta2, correction1, correction2, rate, decay, kappa, epsilon);
        }
        x.adamUpdate(at(values), at(gradient), at(firstMoment), at(secondMoment), length,
          beta1, beta2, correction1, correction2, rate, decay, kappa, epsilon);
      },
      sgdUpdate: (values, gradient, velocity, length, rate, decay, mu, kappa, nesterov) => {
        if (!(mine(values) && mine(gradient) && mine(velocity))) return js.sgdUpdate(values, gradient, velocity, length, rate, decay, mu, kappa, nesterov);
        x.sgdUpdate(at(values), at(gradient), at(velocity), length, rate, decay, mu, kappa, +nesterov);
      },
    };
  }
}
