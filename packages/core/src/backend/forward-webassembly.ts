import { fail } from '../errors.js';
import type { ForwardBackend, ForwardKernels } from './forward.js';
import { LinearMemory } from './memory.js';
import { KernelWorkspace, addressing, checkReservation, compileModule, moduleUnavailable } from './module.js';
import type { ModuleExports } from './module.js';
import { runtimeModuleBase64 } from './wasm-runtime.generated.js';

/** Options of the runtime's WebAssembly SIMD backend. */
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

/**
 * Makes the runtime's WebAssembly SIMD forward backend with a memory of its own; throws a `WeftError` where SIMD
 * modules cannot run.
 */
export function createForwardWebAssembly(options: ForwardWebAssemblyOptions = {}): ForwardBackend {
  compiled ??= compileModule(runtimeModuleBase64);
  const bytes = checkReservation(options.memoryBytes ?? 16 * 1048576 + 4 * (options.weightBytes ?? 0), 'runtime.memoryBytes');
  const memory = new LinearMemory(bytes);
  const x = new WebAssembly.Instance(compiled, { env: { memory: memory.memory } }).exports as unknown as ModuleExports;
  const kernels = forwardKernels(x, memory);
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
      x.packPanels(memory.offsetOf(packed), memory.offsetOf(plain), rows, cols);
      memory.release(memory.offsetOf(plain), plain.length * 4);
      return packed;
    },
    release(array: Float32Array): void {
      const offset = memory.offsetOf(array);
      if (offset >= 0) memory.release(offset, array.length * 4);
    },
    describe(): string {
      return `webassembly (f32x4 SIMD forward kernels, ${Math.round(memory.reservedBytes / 1048576)} MiB reserved)`;
    },
  });
}

/** The forward kernels over `memory`, calling the runtime module's exports `x`. */
function forwardKernels(x: ModuleExports, memory: LinearMemory): ForwardKernels {
  const workspace = new KernelWorkspace(memory);
  const scratch = (floats: number): number => workspace.scratch(floats);
  const lengths = (values: Int32Array | null, rows: number): number => workspace.lengths(values, rows);
  // The weights are packed for these kernels, so an array from elsewhere cannot be run on the JavaScript twins.
  const foreign = (kernel: string): never => {
    fail('backend_mismatch', `runtime ${kernel}`, "arrays of this runtime's webassembly memory (made by its backend)", 'an array from elsewhere');
  };
  // The byte offset of each array, or −1 when it is not this memory's (memory.offsetOf says why not `byteOffset`).
  const { at, pointer: atOrZero } = addressing(memory);
  const kernels: ForwardKernels = {
    affineRows: (out, xs, weights, bias, sizes) => {
      const { rows, inner, cols } = sizes;
      const o = at(out),
        b = at(bias),
        p = at(xs),
        w = at(weights);
      if (o < 0 || b < 0 || p < 0 || w < 0) foreign('affineRows');
      x.affineRows(o, b, p, w, rows, inner, cols, rows < 4 ? 0 : scratch((Math.ceil(rows / 4) * 4 + Math.ceil(cols / 8) * 8) * inner + 32));
      return out;
    },
    lstmLayerStep: (state, xs, weights, work, place) => {
      const { rows, inputWidth, hidden, step } = place;
      const p = at(xs),
        w = at(weights.input),
        r = at(weights.recurrent),
        b = at(weights.bias),
        e = atOrZero(weights.peephole),
        h = at(state.h),
        c = at(state.c),
        g = at(work.gates),
        t = at(work.tanhCell);
      if (p < 0 || w < 0 || r < 0 || b < 0 || e < 0 || h < 0 || c < 0 || g < 0 || t < 0) foreign('lstmLayerStep');
      const panels = rows < 4 ? 0 : scratch((Math.ceil(rows / 4) * 4 + Math.ceil((4 * hidden) / 8) * 8) * Math.max(inputWidth, hidden) + 32);
      x.lstmLayerStep(p, w, r, b, e, h, c, g, t, rows, inputWidth, hidden, lengths(place.lengths, rows), step, panels);
    },
    gruLayerStep: (hState, xs, weights, work, place) => {
      const { rows, inputWidth, hidden, step } = place;
      const p = at(xs),
        w = at(weights.input),
        b = at(weights.bias),
        r = at(weights.recurrent),
        cw = at(weights.candidate),
        cb = atOrZero(weights.candidateBias),
        h = at(hState);
      const j = at(work.projected),
        g = at(work.gates),
        u = at(work.updateReset),
        c = at(work.candidate),
        rh = at(work.resetHidden);
      if (p < 0 || w < 0 || b < 0 || r < 0 || cw < 0 || cb < 0 || h < 0 || j < 0 || g < 0 || u < 0 || c < 0 || rh < 0) foreign('gruLayerStep');
      const panels = rows < 4 ? 0 : scratch((Math.ceil(rows / 4) * 4 + Math.ceil((3 * hidden) / 8) * 8) * Math.max(inputWidth, hidden) + 32);
      x.gruLayerStep(p, w, b, r, cw, cb, h, j, g, u, c, rh, rows, inputWidth, hidden, lengths(place.lengths, rows), step, panels);
    },
    plainLayerStep: (hState, xs, weights, pre, activation, place) => {
      const { rows, inputWidth, hidden, step } = place;
      const p = at(xs),
        w = at(weights.input),
        r = at(weights.recurrent),
        b = at(weights.bias),
        h = at(hState),
        q = at(pre);
      if (p < 0 || w < 0 || r < 0 || b < 0 || h < 0 || q < 0) foreign('plainLayerStep');
      const panels = rows < 4 ? 0 : scratch((Math.ceil(rows / 4) * 4 + Math.ceil(hidden / 8) * 8) * Math.max(inputWidth, hidden) + 32);
      x.plainLayerStep(p, w, r, b, h, q, +(activation === 'relu'), rows, inputWidth, hidden, lengths(place.lengths, rows), step, panels);
    },
  };
  return kernels;
}
