/** `createEncoderDecoderRuntime` with the backend chosen by name (the `@weft/io/runtime/encoder-decoder` entry). */
import type { WeightFile } from '../weight-file.js';
import { readWeightFile } from '../weight-file.js';
import { forwardBackend } from './choose.js';
import type { RuntimeChoiceOptions } from './create.js';
import { weightBytes } from './create.js';
import { EncoderDecoderRuntime } from './decoding.js';

/** An encoder-decoder runtime from weight-file text or a file already read. */
export async function createEncoderDecoderRuntime(source: string | WeightFile, options: RuntimeChoiceOptions = {}): Promise<EncoderDecoderRuntime> {
  const file = typeof source === 'string' ? await readWeightFile(source, options) : source;
  return new EncoderDecoderRuntime(file, forwardBackend(options.backend, weightBytes(file), options.memoryBytes));
}
