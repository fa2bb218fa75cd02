/**
 * ONNX models in: the operator test models of the ONNX backend test data (onnx/backend/test/data/node, Apache 2.0,
 * copied to ../shared/reference/onnx with their stored inputs and outputs) import and, run by weft in f32 on the
 * stored inputs, reproduce the stored outputs within 1e-5. Their weights are graph inputs there, given here as values.
 */
import { existsSync, readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { loadModel, readWeightFile, writeWeightFile } from '@weft/io';
import { decodeOnnxModel, decodeOnnxTensor, importOnnx } from '@weft/io/onnx';
import type { OnnxTensor } from '@weft/io/onnx';
import { runAsOnnx } from './run.js';

const folder = fileURLToPath(new URL('../../../../../shared/reference/onnx/', import.meta.url));
const cases = existsSync(folder) ? readdirSync(folder).filter((name) => name.startsWith('test_')).sort() : [];

interface CaseFile {
  readonly inputs: Record<string, { graph_name: string; file: string }>;
  readonly outputs: Record<string, { graph_name: string; file: string }>;
}

describe('ONNX backend test models (ONNX backend test data, opset 22)', () => {
  it('are all present: 12 cases', () => {
    expect(cases).toHaveLength(12);
  });

  for (const name of cases) {
    it(`${name}: imports, and reproduces its stored outputs within 1e-5 from its stored inputs (f32)`, async () => {
      const base = join(folder, name);
      const described = JSON.parse(readFileSync(join(base, 'case.json'), 'utf8')) as CaseFile;
      const tensors: Record<string, OnnxTensor> = {};
      for (const v of Object.values(described.inputs)) tensors[v.graph_name] = decodeOnnxTensor(readFileSync(join(base, v.file)));
      const weights = Object.fromEntries(['W', 'R', 'B', 'P'].filter((a) => described.inputs[a] !== undefined).map((a) => [described.inputs[a].graph_name, tensors[described.inputs[a].graph_name]]));
      const imported = importOnnx(decodeOnnxModel(readFileSync(join(base, 'model.onnx')), `${name}/model.onnx`), { values: weights });
      const file = await readWeightFile(await writeWeightFile(imported.description, imported.tensors, { metadata: { onnx: imported.binding } }));
      const produced = runAsOnnx(loadModel(file), imported.binding, tensors);
      const outputs = Object.values(described.outputs);
      expect(outputs.length).toBeGreaterThan(0);
      for (const v of outputs) {
        const stored = decodeOnnxTensor(readFileSync(join(base, v.file)));
        const mine = produced[v.graph_name];
        expect(mine, v.graph_name).toBeDefined();
        expect(mine).toHaveLength(stored.values.length);
        let worst = 0;
        for (let i = 0; i < mine.length; i++) worst = Math.max(worst, Math.abs(mine[i] - (stored.values as Float32Array)[i]));
        expect(worst, `${v.graph_name}: worst difference`).toBeLessThanOrEqual(1e-5);
      }
    });
  }
});
