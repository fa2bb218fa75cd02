/** `weft inspect`: a weight file's model, tensor table, parameter count, metadata and digest status. */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { buildModel } from '@weft/cells';
import { modelTensors, writeWeightFile } from '@weft/io';
import { commandFolder, expectOneLineError } from './command.js';

const { folder, weft } = commandFolder('weft-inspect-');

describe('weft inspect', () => {
  it('shows the model, one line per tensor with shape, dtype and bytes, the count, the metadata and a verified digest', async () => {
    const model = buildModel({ input: { kind: 'values', width: 4 }, layers: [{ cell: 'gru', hidden: 6 }], readout: { width: 1 } }, { seed: 2 });
    writeFileSync(join(folder, 'small.weft.json'), await writeWeightFile(model.description, modelTensors(model), { metadata: { task: 'test', horizon: 8 } }));
    const result = weft(['inspect', 'small.weft.json']);
    expect(result.code).toBe(0);
    expect(result.out.split('\n')[0]).toBe('small.weft.json: weft weight file, version 2');
    expect(result.out).toMatch(/^ {2}layers\[0\]\.forward\.recurrentCandidate +\[6, 6\] +f32 +144$/m);
    expect(result.out).toMatch(/^ {2}readout\.bias +\[1\] +f32 +4$/m);
    const count = model.parameters().reduce((n, p) => n + p.tensor.size, 0);
    expect(result.out).toContain(`  ${count} parameters, ${4 * count} bytes of tensor data`);
    expect(result.out).toMatch(/^ {2}horizon: 8$/m);
    expect(result.out).toMatch(/^digest: SHA-256 [0-9a-f]{64} — verified$/m);
  });

  it('still shows a file whose tensor bytes were changed, then says in one line that its digest does not match (exit 1)', () => {
    const text = readFileSync(join(folder, 'small.weft.json'), 'utf8');
    const changed = text.replace(/"data":"(.)/, (_, first: string) => `"data":"${first === 'A' ? 'B' : 'A'}`);
    writeFileSync(join(folder, 'changed.weft.json'), changed);
    const result = weft(['inspect', 'changed.weft.json']);
    expect(result.out).toMatch(/^digest: SHA-256 [0-9a-f]{64} — DOES NOT MATCH the tensor bytes/m);
    expectOneLineError(result, 1, /^weft: changed\.weft\.json: the SHA-256 digest does not match the tensor bytes \(the file was changed or damaged\)$/);
  });

  it('shows a file whose description disagrees with its tensors, then says in one line that weft run refuses it (exit 1)', () => {
    // The digest covers the tensor bytes only: a hand-edited description passes it, and the layout check catches it.
    const text = readFileSync(join(folder, 'small.weft.json'), 'utf8').replace(/"hidden": 6/, '"hidden": 7');
    writeFileSync(join(folder, 'edited.weft.json'), text);
    const result = weft(['inspect', 'edited.weft.json']);
    expect(result.out).toMatch(/^digest: SHA-256 [0-9a-f]{64} — verified$/m);
    expectOneLineError(
      result,
      1,
      /^weft: edited\.weft\.json: weft run refuses this file, its tensors disagree with its description: Bad weight file at tensors \(layers\[0\]\.forward\.input\)\.shape: expected \[4, 21\] \(from the model description\), received \[4, 18\]; /,
    );
    expect(weft(['run', 'edited.weft.json', '-']).code).not.toBe(0);
  });

  it('refuses a file that is no weight file in one line', () => {
    writeFileSync(join(folder, 'text.json'), '[1, 2, 3]');
    expectOneLineError(weft(['inspect', 'text.json']), 1, /^weft: Bad weight file at text\.json: \(file\): expected a JSON object, received /);
  });
});
