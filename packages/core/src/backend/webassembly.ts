/**
 * The WebAssembly SIMD backend (f32): the kernels of core/wasm (AssemblyScript, compiled by scripts/build-wasm.mjs
 * and shipped as base64 inside the build output) over one LinearMemory that never grows (see memory.ts for why
 * that keeps every view valid).
 *
 * Each table entry checks that its arrays live in this backend's memory and then calls the SIMD twin with their
 * byte offsets; otherwise (f64 arrays, or an ordinary f32 array that reached a kernel) it runs the JavaScript
 * kernel, which computes the same thing on any typed array. Ops check their tensors at the boundary, so mixing
 * tensors of two backends is refused there, not papered over here. Kernels without a SIMD twin (the other
 * reductions, ReLU, log, the update clipping's limits, attention's softmax and its backward) are the JavaScript
 * kernels working on this memory.
 *
 * Two builds of the kernels exist (KernelSet, backend.ts): `standard` SIMD, the default, and `relaxed`, whose
 * multiply-adds are WebAssembly relaxed SIMD's (fused where the processor has it), chosen by name (`kernels:
 * 'relaxed'`, or WEFT_KERNELS=relaxed for a process) where the engine validates it (Node 22 and later, current
 * Chromium). The standard set is the default because it gives the same bits on every engine: the same seed trains
 * the same weights in Node 20, Node 24, Deno, Bun and Chromium. The relaxed set's sums differ in the last bits, so a
 * training run takes another path (the monthly CO₂ forecast's test MAE was 0.3214 on the standard set and 0.3466 on
 * the relaxed one, measured on Node 24), for 1.18–1.21× the speed of a training step here. Training gives the same bits
 * for any thread count within one kernel set.
 *
 * Scratch: the matrix product's packed panels and a copy of a ragged batch's lengths live in blocks of this memory
 * that grow to the largest size asked of them (old blocks go back to the memory for reuse).
 */
import { fail } from '../errors.js';
import type { FloatArray } from '../dtype.js';
import { BufferPool } from '../pool.js';
import type { Backend, KernelSet } from './backend.js';
import { registerMemory } from './backend.js';
import type { KernelTable } from './kernel-table.js';
import { LinearMemory } from './memory.js';
import type { ModuleExports } from './module.js';
import { KernelWorkspace, checkReservation, compileModule, moduleUnavailable } from './module.js';
import { environmentKernelChoice } from './environment.js';
import { trainingRelaxedModuleBase64 } from './wasm-training-relaxed.generated.js';
import { trainingModuleBase64 } from './wasm-training.generated.js';
import { simdKernelTable } from './webassembly-table.js';

/** Options of a WebAssembly SIMD backend. */
export interface WebAssemblyBackendOptions {
  /** Bytes of WebAssembly memory to reserve for tensors and scratch (default 256 MiB; address space, see memory.ts). */
  readonly memoryBytes?: number;
  /** Which build of the kernels (backend.ts); default `standard`, or WEFT_KERNELS's (see above). */
  readonly kernels?: KernelSet;
}

const DEFAULT_MEMORY_BYTES = 256 * 1024 * 1024;
const KERNEL_SETS: readonly KernelSet[] = ['standard', 'relaxed'];
const BYTES: Readonly<Record<KernelSet, string>> = { standard: trainingModuleBase64, relaxed: trainingRelaxedModuleBase64 };

const compiled = new Map<KernelSet, WebAssembly.Module>();

/** Why a WebAssembly SIMD backend cannot be made here, or null when it can. */
export function webAssemblyUnavailable(): string | null {
  return moduleUnavailable(trainingModuleBase64);
}

/**
 * A module of one function, (a, b, c) → f32x4.relaxed_madd(a, b, c), in the binary format (WebAssembly core
 * specification §5, with the relaxed SIMD proposal's opcode 0xfd 0x105): the feature test of the relaxed set.
 */
const RELAXED_PROBE = Uint8Array.of(
  ...[0x00, 0x61, 0x73, 0x6d, 0x01, 0x00, 0x00, 0x00], // magic, version 1
  ...[0x01, 0x08, 0x01, 0x60, 0x03, 0x7b, 0x7b, 0x7b, 0x01, 0x7b], // types: (v128 v128 v128) → v128
  ...[0x03, 0x02, 0x01, 0x00], // functions: one, of type 0
  ...[0x0a, 0x0d, 0x01, 0x0b, 0x00, 0x20, 0x00, 0x20, 0x01, 0x20, 0x02, 0xfd, 0x85, 0x02, 0x0b], // code: get a, b, c; madd
);

/** Why the relaxed kernel set cannot run here (the engine does not validate relaxed SIMD), or null when it can. */
export function relaxedKernelsUnavailable(): string | null {
  const missing = webAssemblyUnavailable();
  if (missing !== null) return missing;
  return WebAssembly.validate(RELAXED_PROBE) ? null : 'this engine does not validate WebAssembly relaxed SIMD (Node 22 and later, current browsers do)';
}

/** The kernel set a backend uses when none is named: WEFT_KERNELS's (`standard` or `relaxed`), else `standard`. */
export function defaultKernelSet(): KernelSet {
  const named = environmentKernelChoice();
  return named === undefined ? 'standard' : checkKernelSet(named, 'WEFT_KERNELS');
}

function checkKernelSet(set: unknown, path: string): KernelSet {
  if (!KERNEL_SETS.includes(set as KernelSet)) fail('invalid_option', path, KERNEL_SETS.map((n) => `'${n}'`).join(' or '), JSON.stringify(set));
  return set as KernelSet;
}

/**
 * The compiled kernels of one set (compiled on first use; default the default set): a training thread is handed
 * them at its start (`useCompiledKernels`), so it runs the code this thread has already compiled and tiered up
 * instead of compiling its own. Throws a `WeftError` where the set's modules cannot run.
 */
export function compiledKernels(set: KernelSet = defaultKernelSet()): WebAssembly.Module {
  checkKernelSet(set, 'compiledKernels.set');
  let module = compiled.get(set);
  if (module === undefined) {
    if (set === 'relaxed') {
      const missing = relaxedKernelsUnavailable();
      if (missing !== null)
        fail('backend_unavailable', 'kernels relaxed', 'an engine that runs WebAssembly relaxed SIMD', missing, "use the 'standard' kernels");
    }
    module = compileModule(BYTES[set]);
    compiled.set(set, module);
  }
  return module;
}

/**
 * Uses kernels of `set` compiled in another thread (`compiledKernels` there, sent in a message) for the WebAssembly
 * backends of that set made from now on in this one; kernels already compiled here stay as they are.
 */
export function useCompiledKernels(module: WebAssembly.Module, set: KernelSet = 'standard'): void {
  if (!(module instanceof WebAssembly.Module))
    fail('invalid_argument', 'useCompiledKernels.module', 'a WebAssembly.Module (from compiledKernels)', typeof module);
  checkKernelSet(set, 'useCompiledKernels.set');
  if (!compiled.has(set)) compiled.set(set, module);
}

/**
 * Makes a WebAssembly SIMD backend with a memory of its own, reserved now and never grown; throws a `WeftError` where
 * SIMD modules (or, for `kernels: 'relaxed'`, relaxed SIMD) cannot run (see `webAssemblyUnavailable`).
 */
export function createWebAssemblyBackend(options: WebAssemblyBackendOptions = {}): Backend {
  const bytes = checkReservation(options.memoryBytes ?? DEFAULT_MEMORY_BYTES, 'webassembly backend.memoryBytes');
  const set = options.kernels === undefined ? defaultKernelSet() : checkKernelSet(options.kernels, 'webassembly backend.kernels');
  return new WebAssemblyBackend(bytes, set, compiledKernels(set));
}

class WebAssemblyBackend implements Backend {
  readonly name = 'webassembly' as const;
  readonly kernelSet: KernelSet;
  readonly kernels: KernelTable;
  readonly pool: BufferPool;
  readonly memory: LinearMemory;
  private readonly pools: BufferPool[] = [];
  private readonly exports: ModuleExports;
  private readonly workspace: KernelWorkspace;

  constructor(bytes: number, set: KernelSet, compiled: WebAssembly.Module) {
    this.kernelSet = set;
    this.memory = new LinearMemory(bytes);
    const instance = new WebAssembly.Instance(compiled, { env: { memory: this.memory.memory } });
    this.exports = instance.exports as unknown as ModuleExports;
    const memory = this.memory;
    // When the reservation runs out, every pool's unused f32 blocks go back to the memory first (memory.ts).
    memory.whenExhausted = () => {
      for (const pool of this.pools) pool.releaseFree((array) => memory.release(memory.offsetOf(array), array.length * 4));
    };
    this.pool = this.createPool();
    this.workspace = new KernelWorkspace(memory);
    registerMemory(memory.buffer, this);
    this.kernels = Object.freeze(simdKernelTable(this.exports, memory, this.workspace));
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
    const kernels = this.kernelSet === 'relaxed' ? 'f32x4 relaxed SIMD kernels (fused multiply-adds)' : 'f32x4 SIMD kernels';
    return `webassembly (${kernels}, ${Math.round(this.memory.reservedBytes / 1048576)} MiB reserved)`;
  }
}
