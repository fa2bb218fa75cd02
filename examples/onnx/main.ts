// A model's trip through ONNX and back: a small GRU that forecasts the level of an invented rain tank from its
// inflow is written as an ONNX file (operator set 22), read back into a weft weight file, and streamed through the
// runtime; the forecasts before and after the trip are the same numbers. The same two calls bring in a recurrent
// model trained elsewhere and saved as ONNX.
// Run: npx tsx examples/onnx/main.ts
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { buildModel } from '@weft/cells';
import { modelTensors, writeWeightFile } from '@weft/io';
import { decodeOnnxModel, onnxFromWeightFile, weightFileFromOnnx } from '@weft/io/onnx';
import { createRuntime } from '@weft/io/runtime';
import { AdamRule, Trainer, streamBatches } from '@weft/optim';
import { runIfMain } from '../shared.js';

/** Trains the tank model for `epochs`, sends it through ONNX and back, and streams `hours` of readings through both. */
export async function throughOnnx(epochs = 6, hours = 24): Promise<{ file: string; onnxBytes: number; nodes: string[]; before: number[]; after: number[] }> {
  // Invented hourly readings: inflow follows passing showers, the level fills with it and drains slowly.
  const inflow = Array.from({ length: 2000 }, (_, t) => Math.max(0, Math.sin(t / 7) + 0.5 * Math.sin(t / 3.1)));
  const level: number[] = [];
  inflow.forEach((x, t) => level.push(0.9 * (level[t - 1] ?? 0) + 0.3 * x));
  const values = inflow.flatMap((x, t) => [x, level[t]]);
  const model = buildModel({ input: { kind: 'values', width: 2 }, layers: [{ cell: 'gru', hidden: 8 }], readout: { width: 1 } }, { seed: 4 });
  const data = streamBatches({ kind: 'values', values, features: 2, targetColumns: [1], horizon: 1 }, { streams: 4, window: 24 });
  await new Trainer({ model, data, optimizer: new AdamRule({ rate: 0.02 }), epochs, seed: 'tank' }).run();
  const weights = await writeWeightFile(model.description, modelTensors(model), { metadata: { note: 'rain tank, level one hour ahead' } });

  const onnx = await onnxFromWeightFile(weights);
  const folder = mkdtempSync(join(tmpdir(), 'weft-onnx-'));
  writeFileSync(join(folder, 'tank.onnx'), onnx);
  const back = await weightFileFromOnnx(onnx, { file: 'tank.onnx' });

  const stream = async (text: string): Promise<number[]> => {
    const runtime = await createRuntime(text);
    const streams = runtime.streams(1);
    return Array.from({ length: hours }, (_, t) => streams.step(Float32Array.of(inflow[t], level[t]))[0]);
  };
  return {
    file: join(folder, 'tank.onnx'),
    onnxBytes: onnx.length,
    nodes: decodeOnnxModel(onnx).graph.nodes.map((n) => n.opType),
    before: await stream(weights),
    after: await stream(back),
  };
}

runIfMain(import.meta.url, async () => {
  const { file, onnxBytes, nodes, before, after } = await throughOnnx();
  console.log(`ONNX file: ${file}, ${onnxBytes} bytes, nodes ${nodes.join(' → ')} (try: npx weft inspect ${file})`);
  for (let t = 0; t < before.length; t += 4)
    console.log(`hour ${String(t).padStart(2)}: forecast ${before[t].toFixed(4)} before the trip, ${after[t].toFixed(4)} after`);
  console.log(before.every((v, t) => v === after[t]) ? 'the same forecasts, bit for bit' : 'the forecasts differ');
});
