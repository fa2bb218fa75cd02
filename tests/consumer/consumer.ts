// Type-checked by tests/installed-packages.test.ts against the installed declarations, with moduleResolution
// nodenext and bundler: the public types of every entry resolve and fit together.
import { Random, Tape, WeftError, tensor } from '@weft/core';
import type { FloatArray, Problem } from '@weft/core';
import { matmul } from '@weft/core/kernels';
import type { ForwardBackend } from '@weft/core/forward';
import { buildModel } from '@weft/cells';
import type { ModelDescription } from '@weft/cells/description';
import { AdamRule, Trainer, streamBatches } from '@weft/optim';
import type { TrainingSummary } from '@weft/optim';
import { modelTensors, writeWeightFile } from '@weft/io';
import { createRuntime } from '@weft/io/runtime';
import type { Runtime } from '@weft/io/runtime';
import { createRuntime as createJavascriptRuntime } from '@weft/io/runtime/javascript';
import { createTranslator } from '@weft/io/translate';
import { saveWeightFile } from '@weft/io/node';

const description: ModelDescription = { input: { kind: 'values', width: 1 }, layers: [{ cell: 'gru', hidden: 4 }], readout: { width: 1 } };
const model = buildModel(description, { seed: 1 });
const trainer = new Trainer({
  model,
  data: streamBatches({ kind: 'values', values: [1, 2, 3, 4, 5, 6, 7, 8], features: 1 }, { streams: 1, window: 4 }),
  optimizer: new AdamRule({ rate: 0.01 }),
  epochs: 1,
});
const loss: number = trainer.step();
const out: FloatArray = matmul(new Float32Array(1), Float32Array.of(2), Float32Array.of(3), { rows: 1, inner: 1, cols: 1 });
const summary: Promise<TrainingSummary> = trainer.run();
const problems: readonly Problem[] = new WeftError({ code: 'bad_data', path: 'x', expected: 'y', received: 'z' }).problems;
const backend: ForwardBackend | null = null;
export async function forecast(): Promise<number> {
  const text: string = await writeWeightFile(model.description, modelTensors(model));
  const runtime: Runtime = await createRuntime(text);
  await createJavascriptRuntime(text);
  await saveWeightFile('unused.weft.json', model);
  const translator = createTranslator(runtime.metadata);
  return (
    runtime.streams(1).step(Float32Array.of(1))[0] +
    loss +
    out[0] +
    problems.length +
    translator.inputNames.length +
    new Random(1).uniform() +
    tensor([1], [1]).data[0] +
    (backend === null ? 0 : 1) +
    // biome-ignore lint/correctness/noConstantCondition: makes a Tape to prove the import works; the value does not matter.
    (new Tape() ? 0 : 1) +
    (await summary).steps
  );
}
