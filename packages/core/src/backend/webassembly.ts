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
import { LinearMemory } from './memory.js';
import type { ModuleExports } from './module.js';
import { KernelWorkspace, checkReservation, compileModule, moduleUnavailable } from './module.js';
import { trainingModuleBase64 } from './wasm-training.generated.js';
import { simdKernelTable } from './webassembly-table.js';

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
  if (!(module instanceof WebAssembly.Module))
    fail('invalid_argument', 'useCompiledKernels.module', 'a WebAssembly.Module (from compiledKernels)', typeof module);
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
  private readonly exports: ModuleExports;
  private readonly workspace: KernelWorkspace;

  constructor(bytes: number, compiled: WebAssembly.Module) {
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
    return `webassembly (f32x4 SIMD kernels, ${Math.round(this.memory.reservedBytes / 1048576)} MiB reserved)`;
  }
}
