/**
 * `weft convert` and `weft inspect` on ONNX files: a weight file to ONNX and back keeps its weights bit for bit; an
 * ONNX operator test model (ONNX backend test data, tests/fixtures/onnx) converts with its weights given by
 * --values; inspect shows an ONNX file's graph and what importing it gives, or why not.
 */
import { copyFileSync, existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { buildModel } from '@weft/cells';
import { modelTensors, readWeightFile, writeWeightFile } from '@weft/io';
import { commandFolder, expectOneLineError } from './command.js';
import { isWeightFileText } from '../src/convert.js';

const { folder, weft } = commandFolder('weft-convert-');
const reference = fileURLToPath(new URL('../../../tests/fixtures/onnx/test_lstm_defaults/', import.meta.url));

describe('weft convert', () => {
  it('turns a weight file into ONNX and back with every weight the same, and says what it wrote', async () => {
    const model = buildModel(
      { input: { kind: 'values', width: 3 }, layers: [{ cell: 'lstm', hidden: 4, bidirectional: true, peepholes: true }], readout: { width: 2 } },
      { seed: 3 },
    );
    writeFileSync(join(folder, 'pump.weft.json'), await writeWeightFile(model.description, modelTensors(model), { metadata: { task: 'test' } }));
    const out = weft(['convert', 'pump.weft.json', '--lengths']);
    expect(out.code).toBe(0);
    expect(out.out).toMatch(
      /^pump\.weft\.json → pump\.onnx: ONNX operator set 22, 5 nodes \(LSTM, Transpose, Reshape, MatMul, Add\), \d+ bytes; inputs input, lengths, output output$/m,
    );
    const back = weft(['convert', 'pump.onnx', '--out', 'pump-again.weft.json']);
    expect(back.code).toBe(0);
    expect(back.out).toMatch(
      /^pump\.onnx → pump-again\.weft\.json: LSTM 4 both ways, readout to 2; reads 3 values per step from "input" \(layout 0\); \d+ parameters$/m,
    );
    const original = await readWeightFile(readFileSync(join(folder, 'pump.weft.json'), 'utf8'));
    const again = await readWeightFile(readFileSync(join(folder, 'pump-again.weft.json'), 'utf8'));
    expect(again.digest).toBe(original.digest);
  });

  it('converts an ONNX operator test model whose weights are graph inputs, given as TensorProto files with --values', () => {
    copyFileSync(join(reference, 'model.onnx'), join(folder, 'lstm.onnx'));
    expectOneLineError(
      weft(['convert', 'lstm.onnx']),
      1,
      /^weft: Bad data at node 0 \(LSTM\)\.input\[1\]: expected the input weights W: an initializer or given values, received graph input "W" with no initializer \(give its values\)$/,
    );
    const values = `W=${join(reference, 'test_data_set_0', 'input_1.pb')},R=${join(reference, 'test_data_set_0', 'input_2.pb')}`;
    const result = weft(['convert', 'lstm.onnx', '--values', values]);
    expect(result.code).toBe(0);
    expect(result.out).toMatch(/^lstm\.onnx → lstm\.weft\.json: LSTM 3; reads 2 values per step from "X" \(layout 0\); 72 parameters$/m);
  });

  it('refuses to write a weight file weft could not run, from an ONNX file whose carried metadata contradicts the model', async () => {
    const model = buildModel({ input: { kind: 'values', width: 2 }, layers: [{ cell: 'gru', hidden: 3 }], readout: { width: 1 } }, { seed: 4 });
    const metadata = { task: 'forecast', columns: ['a', 'b'], targetColumns: ['a'], horizon: -3, normalisation: { mean: [0, 0], deviation: [1, 1] } };
    writeFileSync(join(folder, 'odd.weft.json'), await writeWeightFile(model.description, modelTensors(model), { metadata }));
    expect(weft(['convert', 'odd.weft.json']).code).toBe(0);
    const back = weft(['convert', 'odd.onnx', '--out', 'odd-again.weft.json']);
    expectOneLineError(
      back,
      1,
      /^weft: odd\.onnx: the weight file it would become is not one weft can run \(nothing written\): Bad weight file at metadata\.horizon: expected a whole number ≥ 1, received -3$/,
    );
    expect(existsSync(join(folder, 'odd-again.weft.json'))).toBe(false);
  });

  it('refuses a file that is neither, and flags that belong to the other direction', () => {
    writeFileSync(join(folder, 'notes.txt'), 'not a model');
    expectOneLineError(weft(['convert', 'notes.txt']), 1, /^weft: Bad data at notes\.txt @\d+: /);
    expectOneLineError(weft(['convert', 'pump.weft.json', '--values', 'W=x.pb']), 2, /^weft: --values is for ONNX files; this is a weight file$/);
    expect([
      isWeightFileText(new TextEncoder().encode(' \n{"format"')),
      isWeightFileText(Uint8Array.of(8, 10)),
      isWeightFileText(Uint8Array.of(8), 'a.json'),
      isWeightFileText(Uint8Array.of(0x7b), 'b.onnx'),
    ]).toEqual([true, false, true, false]);
  });
});

describe('weft inspect on an ONNX file', () => {
  it('shows its operator sets, inputs, outputs, nodes and constants, and what importing it gives', () => {
    const result = weft(['inspect', 'pump.onnx']);
    expect(result.code).toBe(0);
    expect(result.out.split('\n')[0]).toBe('pump.onnx: ONNX model, IR version 10, operator sets ai.onnx 22, written by weft');
    expect(result.out).toMatch(/^ {2}input \[steps, batch, 3\]$/m);
    expect(result.out).toMatch(
      /^ {4}0 LSTM +input, layers\[0\]\.W, layers\[0\]\.R, layers\[0\]\.B, lengths, -, -, layers\[0\]\.P → layers\[0\]\.Y {2}\(hidden_size=4 direction="bidirectional"\)$/m,
    );
    expect(result.out).toMatch(/^metadata: weft\.model, weft\.metadata$/m);
    expect(result.out).toMatch(/^import: LSTM 4 both ways, readout to 2; reads 3 values per step from "input" \(layout 0\)$/m);
  });

  it('says why a file cannot be imported as it is', () => {
    const result = weft(['inspect', 'lstm.onnx']);
    expect(result.code).toBe(0);
    expect(result.out).toMatch(/^import: not possible as it is: Bad data at node 0 \(LSTM\)\.input\[1\]: .*give its values\)$/m);
  });
});
