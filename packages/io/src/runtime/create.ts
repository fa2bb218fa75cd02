/** `createRuntime` with the backend chosen by name (the `@weft/io/runtime` entry). */
import type { WeightFile } from '../weight-file.js';
import type { ReadOptions } from '../weight-file.js';
import type { RuntimeBackendChoice } from './choose.js';
import { forwardBackend } from './choose.js';
import { Runtime } from './runtime.js';
import type { WeightSource } from './source.js';
import { weightFileFrom } from './source.js';

/** How `createRuntime` reads the file and which forward backend it makes. */
export interface RuntimeChoiceOptions extends ReadOptions {
  /** `webassembly`, `javascript`, or a forward backend; default WebAssembly where the platform runs SIMD. */
  readonly backend?: RuntimeBackendChoice;
  /** Bytes of WebAssembly memory to reserve (default: 16 MiB plus four times the weights). */
  readonly memoryBytes?: number;
}

/** Bytes the file's tensors take as f32 (the WebAssembly memory a runtime reserves grows with it). */
export function weightBytes(file: WeightFile): number {
  let bytes = 0;
  for (const t of file.tensors) bytes += 4 * t.values.length;
  return bytes;
}

/**
 * A runtime from a weight file in any form (text, bytes, a Response, a URL, the parsed object: read and checked), or
 * from a file already read.
 */
export async function createRuntime(source: WeightSource, options: RuntimeChoiceOptions = {}): Promise<Runtime> {
  const file = await weightFileFrom(source, options);
  return new Runtime(file, forwardBackend(options.backend, weightBytes(file), options.memoryBytes), options.plans);
}
