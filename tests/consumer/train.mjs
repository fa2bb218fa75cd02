// The installed packages at work, written as a user of the tarballs would: bare `@weft/*` specifiers only, which
// Node resolves through node_modules and a page through its import map. Shared by the Node consumer and the page
// of tests/installed-packages.test.ts: a tiny training run, its weight file, and the runtime's forecasts.
import { Random, WeftError, defaultBackend } from '@weft/core';
import { matmul as matmulKernel } from '@weft/core/kernels';
import { javascriptForward } from '@weft/core/forward';
import { javascriptForward as plainForward } from '@weft/core/forward/javascript';
import { buildModel } from '@weft/cells';
import * as cellKernels from '@weft/cells/kernels';
import { checkDescription } from '@weft/cells/description';
import { AdamRule, Trainer, streamBatches } from '@weft/optim';
import { modelTensors, readWeightFile, writeWeightFile } from '@weft/io';
import { createRuntime } from '@weft/io/runtime';
import { createRuntime as createJavascriptRuntime } from '@weft/io/runtime/javascript';
import { createTranslator } from '@weft/io/translate';

/** The f32 bits of a number as 8 hex digits, so two platforms' results compare exactly. */
export function f32Bits(value) {
  const view = new DataView(new ArrayBuffer(4));
  view.setFloat32(0, value);
  return view.getUint32(0).toString(16).padStart(8, '0');
}

export const series = Array.from({ length: 320 }, (_, i) => Math.sin(i / 6) + 0.3 * Math.sin(i / 2.3));

export async function trainAndForecast() {
  const entries = [
    Random,
    WeftError,
    defaultBackend,
    matmulKernel,
    javascriptForward,
    plainForward,
    cellKernels,
    checkDescription,
    createJavascriptRuntime,
    createTranslator,
  ];
  const missing = entries.filter((entry) => entry === undefined).length;
  const description = { input: { kind: 'values', width: 1 }, layers: [{ cell: 'gru', hidden: 8 }], readout: { width: 1 } };
  const model = buildModel(description, { seed: 3 });
  const trainer = new Trainer({
    model,
    data: streamBatches({ kind: 'values', values: series, features: 1 }, { streams: 2, window: 16 }),
    optimizer: new AdamRule({ rate: 0.02 }),
    epochs: 3,
    seed: 3,
  });
  const losses = [];
  while (!trainer.finished) losses.push(trainer.step());
  const text = await writeWeightFile(model.description, modelTensors(model), { metadata: { task: 'installed-packages test' } });
  const read = await readWeightFile(text);
  const forecasts = [];
  for (const make of [createRuntime, createJavascriptRuntime]) {
    const runtime = await make(text);
    const streams = runtime.streams(1);
    const input = new Float32Array(1);
    const out = [];
    for (let i = 0; i < 40; i++) {
      input[0] = series[i];
      out.push(streams.step(input)[0]);
    }
    streams.close();
    forecasts.push(out);
  }
  const textModel = await textModelBits();
  let refused = '';
  try {
    await readWeightFile('{ "format": "something else" }');
  } catch (error) {
    refused = error instanceof WeftError ? `WeftError ${error.code}` : `not a WeftError: ${String(error)}`;
  }
  return {
    missing,
    backend: defaultBackend().name,
    steps: losses.length,
    firstLoss: losses[0],
    lastLoss: losses[losses.length - 1],
    lastLossBits: f32Bits(losses[losses.length - 1]),
    digestVerified: read.digestVerified,
    forecasts,
    textModel,
    refused,
    text,
  };
}

/**
 * A character model trained 20 steps on an invented line of text, then run by the runtime over its first 30
 * characters: the loss bits after each step and the f32 bits of every output, so engines compare exactly.
 */
export async function textModelBits() {
  const line = 'the loom hums at dawn while the dyer stirs a vat of indigo; a shuttle flies left, then right. ';
  const symbols = [...new Set(line)].sort();
  const tokens = Int32Array.from(line.repeat(6), (c) => symbols.indexOf(c));
  const description = {
    input: { kind: 'embedding', vocabulary: symbols.length, width: 8 },
    layers: [{ cell: 'lstm', hidden: 16 }],
    readout: { width: symbols.length },
  };
  const model = buildModel(description, { seed: 5 });
  const trainer = new Trainer({
    model,
    data: streamBatches({ kind: 'tokens', tokens, vocabulary: symbols.length }, { streams: 4, window: 12 }),
    optimizer: new AdamRule({ rate: 0.02 }),
    epochs: 100,
    seed: 5,
  });
  const losses = [];
  for (let i = 0; i < 20; i++) losses.push(f32Bits(trainer.step()));
  const runtime = await createRuntime(await writeWeightFile(model.description, modelTensors(model)));
  const streams = runtime.streams(1);
  const outputs = [];
  for (let p = 0; p < 30; p++) outputs.push(Array.from(streams.step(Int32Array.of(tokens[p])), f32Bits).join(''));
  streams.close();
  return { losses, outputs };
}

/** A weight file from elsewhere (fetched by the page), read with its digest checked, and one forecast from it. */
export async function readAndForecast(text) {
  const read = await readWeightFile(text);
  const runtime = await createRuntime(read);
  const streams = runtime.streams(1);
  const out = [];
  for (let i = 0; i < 10; i++) out.push(streams.step(Float32Array.of(series[i]))[0]);
  streams.close();
  return { digestChecked: read.digestChecked, digestVerified: read.digestVerified, forecasts: out };
}
