/**
 * A backend is the one seam for speed: a kernel table and the memory those kernels compute in. Ops, cells,
 * update rules, the trainer, the gradient check and the runtime reach kernels and buffers only through the
 * backend they were given (a tape's `backend`, an option), or the default one (backend/choose.ts).
 *
 * Two exist. `javascript`: the kernels of core/src/kernels over ordinary typed arrays, f32 and f64; it is the
 * reference and the fallback. `webassembly`: f32x4 SIMD kernels (core/wasm, compiled at build time) over one
 * WebAssembly memory; f64 arrays stay ordinary typed arrays and run on the JavaScript kernels, so gradient checks
 * in f64 work on either backend.
 *
 * Where a tensor lives: an f32 array belongs to the WebAssembly backend whose memory holds it, and to the
 * JavaScript backend otherwise; an f64 array belongs to both. Operations refuse tensors that do not belong to
 * their tape's backend (a `backend_mismatch` error) rather than copy silently.
 */
import type { FloatArray } from '../dtype.js';
import type { BufferPool } from '../pool.js';
import type { KernelTable } from './kernel-table.js';

/** The backends weft has, by name. */
export type BackendName = 'javascript' | 'webassembly';

/**
 * The WebAssembly backend's two builds of its kernels: `standard` SIMD (the default), whose every multiply and add is
 * rounded apart (the same bits on every engine), and `relaxed`, whose matrix products and attention sums use
 * WebAssembly relaxed SIMD's multiply-add, which the engine fuses into one instruction with one rounding where the
 * processor has it (faster; the last bits differ from the standard set's, and may differ between processors).
 */
export type KernelSet = 'standard' | 'relaxed';

/**
 * Kernels and the memory they compute in: every operation, cell, update rule, trainer and runtime reaches kernels
 * through one.
 */
export interface Backend {
  /** Which backend this is. */
  readonly name: BackendName;
  /** Which build of the WebAssembly kernels computes; null for the JavaScript backend. */
  readonly kernelSet: KernelSet | null;
  /** The backend's kernel table, one function per kernel name. */
  readonly kernels: KernelTable;
  /** Where this backend's tensors get their buffers. */
  readonly pool: BufferPool;
  /** A pool of its own over the same memory (a trainer's, so its counts are its own). */
  createPool(): BufferPool;
  /** True when `array` lives where this backend computes (every f64 array does). */
  holds(array: FloatArray): boolean;
  /** One line for progress output and reports: the name and what it runs on. */
  describe(): string;
}

/** Every WebAssembly memory a backend computes in, so any array can be told where it lives. */
const memories = new WeakMap<ArrayBufferLike, Backend>();

export function registerMemory(buffer: ArrayBufferLike, backend: Backend): void {
  memories.set(buffer, backend);
}

/** The WebAssembly backend whose memory holds `array`, or null for an ordinary typed array. */
export function memoryOwner(array: FloatArray): Backend | null {
  return memories.get(array.buffer) ?? null;
}
