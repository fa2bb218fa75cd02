/**
 * What both WebAssembly backends (training and the runtime's forward backend) share: checking that the platform
 * validates a module's bytes, compiling it once, and the two kinds of per-call working memory their kernels are
 * handed — a scratch block for packed panels and a copy of a ragged batch's lengths — kept in the backend's own
 * LinearMemory and grown (never shrunk) to the largest size asked.
 */
import { fail } from '../errors.js';
import { decodeBase64Bytes } from './bytes.js';
import type { LinearMemory } from './memory.js';
import type { FloatArray } from '../dtype.js';

/** Why a module in base64 cannot run here, or null when it can. */
export function moduleUnavailable(base64: string): string | null {
  if (typeof WebAssembly !== 'object' || typeof WebAssembly.validate !== 'function') return 'this platform has no WebAssembly';
  try {
    if (!WebAssembly.validate(decodeBase64Bytes(base64))) return 'this platform does not validate WebAssembly SIMD (128-bit) modules';
  } catch (error) {
    return `WebAssembly refused the module (${(error as Error).message})`;
  }
  return null;
}

/** Compiles a module, or throws the one-line error that names the backend and what the platform lacks. */
export function compileModule(base64: string): WebAssembly.Module {
  const missing = moduleUnavailable(base64);
  if (missing !== null) {
    fail('backend_unavailable', 'backend webassembly', 'a platform that runs WebAssembly SIMD', missing, "use the 'javascript' backend");
  }
  try {
    return new WebAssembly.Module(decodeBase64Bytes(base64));
  } catch (error) {
    // Validated but not compiled: a page whose Content-Security-Policy lacks 'wasm-unsafe-eval', for one.
    fail(
      'backend_unavailable',
      'backend webassembly',
      'a platform that compiles WebAssembly',
      `a refusal to compile (${(error as Error).message})`,
      "use the 'javascript' backend, or allow 'wasm-unsafe-eval' in the page's CSP",
    );
  }
}

/** Checks a reservation in bytes (an option named `path`). */
export function checkReservation(bytes: unknown, path: string): number {
  const most = 4 * 1073741824 - 65536;
  if (typeof bytes !== 'number' || !Number.isInteger(bytes) || bytes < 65536 || bytes > most) {
    fail('invalid_option', path, `a whole number of bytes in [65536, ${most}]`, String(bytes));
  }
  return bytes;
}

/** The kernels' working memory inside one LinearMemory. */
export class KernelWorkspace {
  private readonly memory: LinearMemory;
  private scratchOffset = 0;
  private scratchBytes = 0;
  private lengthsCopy: Int32Array;

  constructor(memory: LinearMemory) {
    this.memory = memory;
    this.lengthsCopy = memory.integers(64);
  }

  /** The byte offset of a scratch block of at least `floats` floats. */
  scratch(floats: number): number {
    const bytes = floats * 4;
    if (bytes > this.scratchBytes) {
      if (this.scratchBytes > 0) this.memory.release(this.scratchOffset, this.scratchBytes);
      this.scratchBytes = Math.max(4096, 2 * this.scratchBytes, bytes);
      this.scratchOffset = this.memory.allocate(this.scratchBytes);
    }
    return this.scratchOffset;
  }

  /** A ragged batch's lengths copied into the memory (its byte offset), or 0 for none. */
  lengths(lengths: Int32Array | null, rows: number): number {
    return lengths === null ? 0 : this.integers(lengths, rows);
  }

  /**
   * The first `count` of `values` (a batch's lengths, a softmax's target classes) copied into the memory: the byte
   * offset of the copy, valid until the next call.
   */
  integers(values: Int32Array, count: number): number {
    if (this.lengthsCopy.length < count) {
      this.memory.release(this.memory.offsetOf(this.lengthsCopy), this.lengthsCopy.length * 4);
      this.lengthsCopy = this.memory.integers(Math.max(count, 2 * this.lengthsCopy.length));
    }
    const copy = this.lengthsCopy;
    for (let i = 0; i < count; i++) copy[i] = values[i];
    return this.memory.offsetOf(copy);
  }
}

/** How a kernel wrapper finds arrays in a memory (memory.offsetOf: a recorded offset, not `byteOffset`; memory.ts says why). */
export interface Addressing {
  /** True when the array lives in the memory. */
  readonly mine: (a: FloatArray) => boolean;
  /** True for null or an array of the memory. */
  readonly mineOrNull: (a: FloatArray | null) => boolean;
  /** The array's byte offset in the memory. */
  readonly at: (a: FloatArray | Int32Array) => number;
  /** The array's byte offset, or 0 for null. */
  readonly pointer: (a: FloatArray | Int32Array | null) => number;
}

/** The addressing of `memory`'s arrays, for the kernel wrappers of both WebAssembly backends. */
export function addressing(memory: LinearMemory): Addressing {
  return {
    mine: (a) => memory.offsetOf(a) >= 0,
    mineOrNull: (a) => a === null || memory.offsetOf(a) >= 0,
    at: (a) => memory.offsetOf(a),
    pointer: (a) => (a === null ? 0 : memory.offsetOf(a)),
  };
}

/** The functions a kernel module exports, by name (their arguments: byte offsets and sizes). */
export interface ModuleExports {
  readonly [name: string]: (...args: number[]) => void;
}
