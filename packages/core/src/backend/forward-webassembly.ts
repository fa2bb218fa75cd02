/**
 * The runtime's WebAssembly SIMD backend: the forward kernels of core/wasm/runtime.ts (a module of its own, so the
 * runtime bundle carries no training kernels) over one LinearMemory of its own that never grows (memory.ts says
 * why that keeps every view valid). Weights are copied into it when a runtime is made; streams take their state
 * and working buffers from it when they are made, so stepping allocates nothing. Weight matrices are packed into
 * 8-column panels when they are copied in (core/wasm/packed.ts), so a streaming step reads each panel as one
 * contiguous run; the kernels therefore refuse arrays that are not this memory's.
 */
import type { FloatArray } from '../dtype.js';
import { WeftError } from '../errors.js';
import type { ForwardBackend, ForwardKernels } from './forward.js';
import { LinearMemory } from './memory.js';
import { KernelWorkspace, checkReservation, compileModule, moduleUnavailable } from './module.js';
import { runtimeModuleBase64 } from './wasm-runtime.generated.js';

type Kernel = (...args: number[]) => void;

export interface ForwardWebAssemblyOptions {
  /** Bytes to reserve for weights, stream state and scratch (default: 16 MiB plus four times `weightBytes`). */
  readonly memoryBytes?: number;
  /** The weights the runtime will copy in, to size the default reservation. */
  readonly weightBytes?: number;
}

let compiled: WebAssembly.Module | null = null;

/** Why the runtime's WebAssembly SIMD backend cannot run here, or null when it can. */
export function forwardWebAssemblyUnavailable(): string | null {
  return moduleUnavailable(runtimeModuleBase64);
}

export function createForwardWebAssembly(options: ForwardWebAssemblyOptions = {}): ForwardBackend {
  compiled ??= compileModule(runtimeModuleBase64);
  const bytes = checkReservation(options.memoryBytes ?? 16 * 1048576 + 4 * (options.weightBytes ?? 0), 'runtime.memoryBytes');
  const memory = new LinearMemory(bytes);
  const x = new WebAssembly.Instance(compiled, { env: { memory: memory.memory } }).exports as unknown as Readonly<Record<string, Kernel>>;
  const buffer = memory.buffer;
  const mine = (a: FloatArray): boolean => a.buffer === buffer;
  const workspace = new KernelWorkspace(memory);
  const scratch = (floats: number): number => workspace.scratch(floats);
  const lengths = (values: Int32Array | null, rows: number): number => workspace.lengths(values, rows);
  // The weights are packed for these kernels, so an array from elsewhere cannot be run on the JavaScript twins.
  const foreign = (kernel: string): never => {
    throw new WeftError({ code: 'backend_mismatch', path: `runtime ${kernel}`, expected: "arrays of this runtime's webassembly memory (made by its backend)", received: 'an array from elsewhere' });
  };
  const kernels: ForwardKernels = {
    affineRows: (out, bias, xs, weights, rows, inner, cols) => {
      if (!(mine(out) && mine(bias) && mine(xs) && mine(weights))) foreign('affineRows');
      x.affineRows(out.byteOffset, bias.byteOffset, xs.byteOffset, weights.byteOffset, rows, inner, cols,
        rows < 4 ? 0 : scratch((Math.ceil(rows / 4) * 4 + Math.ceil(cols / 8) * 8) * inner + 32));
      return out;
    },
    lstmLayerStep: (xs, input, recurrent, bias, peephole, hidden, cell, gates, tanhCell, rows, inputSize, size, rowLengths, step) => {
      if (!(mine(xs) && mine(input) && mine(recurrent) && mine(bias) && (peephole === null || mine(peephole)) && mine(hidden) && mine(cell) && mine(gates) && mine(tanhCell))) foreign('lstmLayerStep');
      x.lstmLayerStep(xs.byteOffset, input.byteOffset, recurrent.byteOffset, bias.byteOffset, peephole === null ? 0 : peephole.byteOffset,
        hidden.byteOffset, cell.byteOffset, gates.byteOffset, tanhCell.byteOffset, rows, inputSize, size, lengths(rowLengths, rows), step,
        rows < 4 ? 0 : scratch((Math.ceil(rows / 4) * 4 + Math.ceil((4 * size) / 8) * 8) * Math.max(inputSize, size) + 32));
    },
    gruLayerStep: (xs, input, bias, recurrent, candidateWeights, candidateBias, hidden, projected, gates, updateReset, candidate, resetHidden,
      rows, inputSize, size, rowLengths, step) => {
      if (!(mine(xs) && mine(input) && mine(bias) && mine(recurrent) && mine(candidateWeights) && (candidateBias === null || mine(candidateBias))
        && mine(hidden) && mine(projected) && mine(gates) && mine(updateReset) && mine(candidate) && mine(resetHidden))) foreign('gruLayerStep');
      x.gruLayerStep(xs.byteOffset, input.byteOffset, bias.byteOffset, recurrent.byteOffset, candidateWeights.byteOffset,
        candidateBias === null ? 0 : candidateBias.byteOffset, hidden.byteOffset, projected.byteOffset, gates.byteOffset, updateReset.byteOffset,
        candidate.byteOffset, resetHidden.byteOffset, rows, inputSize, size, lengths(rowLengths, rows), step,
        rows < 4 ? 0 : scratch((Math.ceil(rows / 4) * 4 + Math.ceil((3 * size) / 8) * 8) * Math.max(inputSize, size) + 32));
    },
    plainLayerStep: (xs, input, recurrent, bias, hidden, pre, rectified, rows, inputSize, size, rowLengths, step) => {
      if (!(mine(xs) && mine(input) && mine(recurrent) && mine(bias) && mine(hidden) && mine(pre))) foreign('plainLayerStep');
      x.plainLayerStep(xs.byteOffset, input.byteOffset, recurrent.byteOffset, bias.byteOffset, hidden.byteOffset, pre.byteOffset, +rectified,
        rows, inputSize, size, lengths(rowLengths, rows), step,
        rows < 4 ? 0 : scratch((Math.ceil(rows / 4) * 4 + Math.ceil(size / 8) * 8) * Math.max(inputSize, size) + 32));
    },
  };
  return Object.freeze({
    name: 'webassembly' as const,
    kernels: Object.freeze(kernels),
    floats(length: number): Float32Array {
      const array = memory.floats(length);
      array.fill(0);
      return array;
    },
    matrix(values: ArrayLike<number>, rows: number, cols: number): Float32Array {
      const plain = memory.floats(rows * cols);
      plain.set(values);
      const packed = memory.floats(Math.ceil(cols / 8) * 8 * rows);
      x.packPanels(packed.byteOffset, plain.byteOffset, rows, cols);
      memory.release(plain.byteOffset, plain.length * 4);
      return packed;
    },
    release(array: Float32Array): void {
      if (array.buffer === buffer) memory.release(array.byteOffset, array.length * 4);
    },
    describe(): string {
      return `webassembly (f32x4 SIMD forward kernels, ${Math.round(memory.reservedBytes / 1048576)} MiB reserved)`;
    },
  });
}
