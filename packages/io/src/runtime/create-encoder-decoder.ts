/** `createEncoderDecoderRuntime` with the backend chosen by name (the `@weft/io/runtime/encoder-decoder` entry). */
import { forwardBackend } from './choose.js';
import type { RuntimeChoiceOptions } from './create.js';
import { weightBytes } from './create.js';
import { EncoderDecoderRuntime } from './decoding.js';
import type { WeightSource } from './source.js';
import { weightFileFrom } from './source.js';

/** An encoder-decoder runtime from a weight file in any form `createRuntime` takes (source.ts). */
export async function createEncoderDecoderRuntime(source: WeightSource, options: RuntimeChoiceOptions = {}): Promise<EncoderDecoderRuntime> {
  const file = await weightFileFrom(source, options);
  return new EncoderDecoderRuntime(file, forwardBackend(options.backend, weightBytes(file), options.memoryBytes), options.plans);
}
