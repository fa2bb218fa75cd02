import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, expectTypeOf, it } from 'vitest';
import { WeftError } from '@weft/core';
import { EncoderDecoderModel, buildModel } from '@weft/cells';
import { AdamRule, Trainer, pairBatches, streamBatches } from '@weft/optim';
import { readCheckpoint, writeCheckpoint } from '@weft/io';
import type { TrainingState } from '@weft/io';
import type { TrainingSnapshot } from '@weft/optim';
import { loadCheckpoint, loadWeightFile, saveCheckpoint, saveWeightFile, writeFileAtomic } from '@weft/io/node';
import { createRuntime } from '@weft/io/runtime';
import { createEncoderDecoderRuntime } from '@weft/io/runtime/encoder-decoder';

const folder = mkdtempSync(join(tmpdir(), 'weft-io-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

function setup() {
  const tokens = Int32Array.from({ length: 2400 }, (_, i) => (i * 7 + Math.floor(i / 5)) % 9);
  const model = buildModel(
    {
      input: { kind: 'embedding', vocabulary: 9, width: 4 },
      layers: [
        { cell: 'lstm', hidden: 8 },
        { cell: 'gru', hidden: 8 },
      ],
      dropout: 0.2,
      readout: { width: 9 },
    },
    { seed: 8 },
  );
  const trainer = new Trainer({
    model,
    data: streamBatches({ kind: 'tokens', tokens, vocabulary: 9 }, { streams: 3, window: 10 }),
    validation: streamBatches({ kind: 'tokens', tokens: tokens.slice(0, 400), vocabulary: 9 }, { window: 10 }),
    optimizer: new AdamRule({ rate: 0.01 }),
    schedule: { kind: 'step', every: 20, factor: 0.8, warmup: 3 },
    epochs: 2,
    validateEvery: 25,
    seed: 'checkpoint',
  });
  return { model, trainer };
}

const weights = (m: ReturnType<typeof setup>['model']) => m.parameters().map((p) => Array.from(p.tensor.data));

describe('the training state a checkpoint carries', () => {
  it("is the trainer's snapshot type exactly, though @weft/io does not depend on @weft/optim", () => {
    // Checked by the type checker (npm test type-checks the tests): a field added to one and not the other fails.
    expectTypeOf<TrainingState>().toEqualTypeOf<TrainingSnapshot>();
    const io = JSON.parse(readFileSync(new URL('../package.json', import.meta.url), 'utf8')) as { dependencies: Record<string, string> };
    expect(Object.keys(io.dependencies).sort()).toEqual(['@weft/cells', '@weft/core']);
  });
});

describe('checkpoints', () => {
  it('of version 1 read as the same training state, their best weights respelled as version 2 names', async () => {
    const first = setup();
    await first.trainer.run();
    const text = await writeCheckpoint(first.trainer, first.model, { task: 'next-token' });
    // As version 1 wrote it: the old version number, and layers.0.forward.input in the tensors and the best weights.
    const old = text.replace('"version": 2', '"version": 1').replace(/"layers\[(\d+)\]\./g, '"layers.$1.');
    expect(old).not.toContain('"layers[');
    const current = await readCheckpoint(text);
    const { file, snapshot } = await readCheckpoint(old);
    expect(file.version).toBe(1);
    expect(Object.keys(snapshot.best.parameters ?? {})).toContain('layers[1].forward.recurrentCandidate');
    expect(snapshot).toEqual(current.snapshot);
    const resumed = setup();
    resumed.trainer.restore(snapshot);
    expect(weights(resumed.model)).toEqual(weights(first.model));
  });

  it('resume bit-identical to an uninterrupted run, through the file text', async () => {
    const whole = setup();
    await whole.trainer.run();
    const first = setup();
    for (let i = 0; i < 61; i++) first.trainer.step();
    const text = await writeCheckpoint(first.trainer, first.model, { task: 'next-token' });
    const { file, snapshot } = await readCheckpoint(text);
    expect(file.metadata.task).toBe('next-token');
    const resumed = setup();
    resumed.trainer.restore(snapshot);
    await resumed.trainer.run();
    expect(resumed.trainer.stepsTaken).toBe(whole.trainer.stepsTaken);
    expect(weights(resumed.model)).toEqual(weights(whole.model));
    // A checkpoint is also a weight file the runtime can run.
    expect((await createRuntime(text)).outputWidth).toBe(9);
  });

  it('of an encoder-decoder with attention resume bit-identical too, and the runtime decodes the checkpoint', async () => {
    const pairs = Array.from({ length: 90 }, (_, i) => ({ source: [2 + (i % 5), 2 + ((i * 3) % 5), 2 + (i % 3)], target: [2 + ((i * 3) % 5), 2 + (i % 5)] }));
    const make = () => {
      const model = new EncoderDecoderModel(
        {
          kind: 'encoder-decoder',
          attention: 'additive',
          encoder: { input: { kind: 'embedding', vocabulary: 7, width: 4 }, layers: [{ cell: 'lstm', hidden: 6 }] },
          decoder: { input: { kind: 'embedding', vocabulary: 7, width: 4 }, layers: [{ cell: 'lstm', hidden: 6 }], dropout: 0.2, readout: { width: 7 } },
        },
        { seed: 4 },
      );
      const trainer = new Trainer({
        model,
        data: pairBatches(pairs, { batchSize: 8, startToken: 0, endToken: 1, seed: 2 }),
        validation: pairBatches(pairs.slice(0, 20), { batchSize: 10, startToken: 0, endToken: 1 }),
        optimizer: new AdamRule({ rate: 0.01 }),
        epochs: 3,
        validateEvery: 10,
        seed: 'pairs',
      });
      return { model, trainer };
    };
    const whole = make();
    await whole.trainer.run();
    const first = make();
    for (let i = 0; i < 14; i++) first.trainer.step();
    const text = await writeCheckpoint(first.trainer, first.model);
    const resumed = make();
    resumed.trainer.restore((await readCheckpoint(text)).snapshot);
    await resumed.trainer.run();
    const values = (m: EncoderDecoderModel) => m.parameters().map((p) => Array.from(p.tensor.data));
    expect(values(resumed.model)).toEqual(values(whole.model));
    const runtime = await createEncoderDecoderRuntime(text, { backend: 'javascript' });
    expect(runtime.attention).toBe('additive');
    expect(runtime.decode([2, 3, 4], { startToken: 0, endToken: 1, maxLength: 5 }).tokens.length).toBeGreaterThan(0);
  });

  it('are told apart from plain weight files', async () => {
    const { model } = setup();
    await saveWeightFile(join(folder, 'plain.json'), model);
    await expect(loadCheckpoint(join(folder, 'plain.json'))).rejects.toThrowError(
      `Bad weight file at ${join(folder, 'plain.json')}: training: expected the training state of a checkpoint, received none (a weight file, not a checkpoint)`,
    );
  });

  it('save and load through files, atomically', async () => {
    const { model, trainer } = setup();
    trainer.step();
    const path = join(folder, 'run.checkpoint.json');
    await saveCheckpoint(path, trainer, model);
    const { snapshot } = await loadCheckpoint(path);
    expect(snapshot.step).toBe(1);
    expect(readdirSync(folder).filter((name) => name.endsWith('.tmp'))).toEqual([]);
    // An atomic write replaces the whole file or nothing.
    writeFileAtomic(path, 'new text');
    expect(readFileSync(path, 'utf8')).toBe('new text');
    expect(() => writeFileAtomic(join(folder, 'no-such-folder', 'x.json'), 'x')).toThrowError(
      /^Could not save at .*no-such-folder\/x\.json: expected a file written in full \(1 bytes\), received the folder does not exist$/,
    );
    expect(readdirSync(folder).filter((name) => name.endsWith('.tmp'))).toEqual([]);
  });

  it('name the file when it is missing or damaged', async () => {
    await expect(loadWeightFile(join(folder, 'missing.json'))).rejects.toThrowError(
      `Bad data at ${join(folder, 'missing.json')}: expected a readable file, received no such file`,
    );
    writeFileSync(join(folder, 'broken.json'), '{"format": "weft-weights", "version": 1');
    const error = await loadWeightFile(join(folder, 'broken.json')).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(WeftError);
    expect((error as WeftError).path.startsWith(`${join(folder, 'broken.json')}: (file)`)).toBe(true);
  });
});
