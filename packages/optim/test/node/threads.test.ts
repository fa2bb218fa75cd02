/**
 * Training on worker threads (issue 17, A and C): fixed shards make the weights the same bits in this thread and on
 * 1, 2, 3 or 4 threads (LSTM and GRU, dropout on, carried state with a lookback), with the trainer's thread computing
 * its share or not, across a resume that changes the thread count, and on the relaxed kernel set (within that set); a thread that throws or is ended mid-step ends
 * the run with a one-line error naming it, within the time asked, with no thread left and the last checkpoint intact.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { Random, WeftError, createWebAssemblyBackend, defaultBackend, relaxedKernelsUnavailable, setDefaultBackend } from '@weft/core';
import { buildModel } from '@weft/cells';
import type { SequenceModel } from '@weft/cells';
import { AdamRule, Trainer, streamBatches } from '@weft/optim';
import type { DataSource, ShardWorkers, TrainerOptions } from '@weft/optim';
import { startTrainingThreads } from '@weft/optim/node';
import type { ThreadGroup as TrainingThreads } from '@weft/optim';
import { loadCheckpoint, saveCheckpoint } from '@weft/io/node';

const folder = mkdtempSync(join(tmpdir(), 'weft-threads-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

function corpus(length: number): Int32Array {
  const random = new Random('threads corpus');
  return Int32Array.from({ length }, (_, i) => (i % 4 === 3 ? (i * 5) % 11 : random.integer(11)));
}

function model(cell: 'lstm' | 'gru'): SequenceModel {
  return buildModel(
    {
      input: { kind: 'embedding', vocabulary: 11, width: 6 },
      layers: [
        { cell, hidden: 12 },
        { cell, hidden: 10 },
      ],
      dropout: 0.2,
      readout: { width: 11 },
    },
    { seed: 3 },
  );
}

function options(m: SequenceModel, workers?: ShardWorkers, data?: DataSource): TrainerOptions {
  return {
    model: m,
    // 12 streams in shards of 4 rows: 3 shards, whatever computes them; windows of 6 steps re-reading 3 before.
    data: data ?? streamBatches({ kind: 'tokens', tokens: corpus(6000), vocabulary: 11 }, { streams: 12, window: 6, lookback: 3 }),
    optimizer: new AdamRule({ rate: 0.01 }),
    epochs: 1,
    seed: 'threads',
    gradientNormLimit: 1,
    shardRows: 4,
    ...(workers === undefined ? {} : { workers }),
  };
}

const weights = (m: SequenceModel) => m.parameters().map((p) => Array.from(p.tensor.data));

async function steps(trainer: Trainer, count: number): Promise<void> {
  for (let i = 0; i < count; i++) await trainer.stepAsync();
}

describe('training on worker threads', () => {
  for (const cell of ['lstm', 'gru'] as const) {
    it(`gives the same ${cell.toUpperCase()} weights, bit for bit, in this thread and on 1, 2, 3 and 4 threads after 50 steps`, async () => {
      const inThread = new Trainer(options(model(cell)));
      await steps(inThread, 50);
      const reference = weights(inThread.model as SequenceModel);
      for (const count of [1, 2, 3, 4]) {
        const m = model(cell);
        const threads = await startTrainingThreads({ count, model: m });
        // The trainer's thread is one of the count: count − 1 threads started.
        expect(threads.threads.length).toBe(count - 1);
        try {
          await steps(new Trainer(options(m, threads)), 50);
        } finally {
          await threads.close();
        }
        expect(weights(m), `${count} threads`).toEqual(reference);
      }
    }, 120_000);
  }

  it.skipIf(relaxedKernelsUnavailable() !== null)(
    'gives the same weights, bit for bit, in this thread and on 2 threads on the relaxed kernel set, other bits than the standard set',
    async () => {
      const standard = new Trainer(options(model('lstm')));
      await steps(standard, 20);
      const kept = defaultBackend();
      setDefaultBackend(createWebAssemblyBackend({ kernels: 'relaxed' }));
      try {
        const inThread = new Trainer(options(model('lstm')));
        await steps(inThread, 20);
        const m = model('lstm');
        const threads = await startTrainingThreads({ count: 2, model: m });
        try {
          await steps(new Trainer(options(m, threads)), 20);
        } finally {
          await threads.close();
        }
        expect(weights(m)).toEqual(weights(inThread.model as SequenceModel));
        // Fused multiply-adds round once where the standard set rounds twice: the runs part in the last bits.
        expect(weights(m)).not.toEqual(weights(standard.model as SequenceModel));
      } finally {
        setDefaultBackend(kept);
      }
    },
    60_000,
  );

  const variants = [
    {
      what: "when the trainer's thread leaves every shard to 2 started threads",
      cell: 'lstm',
      options: { callerComputes: false },
      check: (t: TrainingThreads) => expect(t.threads.length).toBe(2),
    },
    {
      what: 'with weights and gradients sent in messages instead of shared memory',
      cell: 'gru',
      options: { shared: false },
      check: (t: TrainingThreads) => expect(t.shared).toBe(false),
    },
  ] as const;
  for (const variant of variants) {
    it(`gives the same bits ${variant.what}`, async () => {
      const inThread = new Trainer(options(model(variant.cell)));
      await steps(inThread, 20);
      const m = model(variant.cell);
      const threads = await startTrainingThreads({ count: 2, model: m, ...variant.options });
      variant.check(threads);
      try {
        await steps(new Trainer(options(m, threads)), 20);
      } finally {
        await threads.close();
      }
      expect(weights(m)).toEqual(weights(inThread.model as SequenceModel));
    }, 60_000);
  }

  it('resumes on 3 threads from a checkpoint written on 2, to the same bits as 50 steps in this thread', async () => {
    const inThread = new Trainer(options(model('lstm')));
    await steps(inThread, 50);
    const first = model('lstm');
    const two = await startTrainingThreads({ count: 2, model: first });
    const trainer = new Trainer(options(first, two));
    await steps(trainer, 20);
    await two.close();
    const path = join(folder, 'two.checkpoint.json');
    await saveCheckpoint(path, trainer, first);
    const second = model('lstm');
    const three = await startTrainingThreads({ count: 3, model: second });
    const resumed = new Trainer(options(second, three));
    resumed.restore((await loadCheckpoint(path)).snapshot);
    await steps(resumed, 30);
    await three.close();
    expect(weights(second)).toEqual(weights(inThread.model as SequenceModel));
  }, 60_000);

  it('ends the run when a thread throws, naming the thread, the step and the cause, with no thread left', async () => {
    // Token 11 is outside the vocabulary of 11: the shard holding it throws in its thread at the step that reads it.
    // 12 streams of 500 tokens: stream 4 is in shard 1 (rows 4–7), which the started thread computes.
    const tokens = corpus(6000);
    tokens[4 * 500 + 6 * 4] = 11;
    const data = streamBatches({ kind: 'tokens', tokens, vocabulary: 12 }, { streams: 12, window: 6 });
    const m = model('gru');
    const threads = await startTrainingThreads({ count: 2, model: m });
    // A hang would outlast the test's time limit (30 s) and fail it; the run's duration is not asserted.
    const error = await new Trainer(options(m, threads, data)).run().then(
      () => null,
      (e: unknown) => e,
    );
    expect(error).toBeInstanceOf(WeftError);
    expect((error as WeftError).message).toMatch(
      /^Training thread failed at training thread 2 of 2, step 5: expected its shards' gradients, received it threw: Invalid argument at model\.input\.tokens\[\d+\]: expected an id in \[0, 11\), received 11 \(every thread was ended; the last checkpoint is as it was written\)$/,
    );
    expect(await threadsAlive(threads)).toBe(0);
  }, 30_000);

  it('ends the run within the time asked when a thread is ended mid-step, and the checkpoint before still loads and resumes', async () => {
    const m = model('lstm');
    const threads = await startTrainingThreads({ count: 2, model: m, answerWithinMs: 5_000 });
    const path = join(folder, 'killed.checkpoint.json');
    // The started thread is ended right after step 6 is handed to it, while it computes. Ending is asynchronous:
    // on a busy machine its small shard may be answered first, and the thread is gone by step 7.
    const thread = threads.threads[0];
    const post = thread.post.bind(thread);
    thread.post = (message, transfer) => {
      post(message, transfer);
      if ((message as { step?: number }).step === 6) void (thread as unknown as { worker: { terminate(): Promise<number> } }).worker.terminate();
    };
    const trainer = new Trainer({
      ...options(m, threads),
      afterStep: async (t) => {
        if (t.stepsTaken === 5) await saveCheckpoint(path, t, m);
      },
    });
    // A thread that never answers is given up after answerWithinMs; a hang would outlast the test's time limit.
    const error = await trainer.run().then(
      () => null,
      (e: unknown) => e,
    );
    expect((error as WeftError).message).toMatch(
      /^Training thread failed at training thread 2 of 2, (step [67]|after step 6): expected its shards' gradients, received it exited \(code \d+\)/,
    );
    expect(await threadsAlive(threads)).toBe(0);
    const saved = await loadCheckpoint(path);
    expect(saved.snapshot.step).toBe(5);
    const resumed = new Trainer(options(model('lstm')));
    resumed.restore(saved.snapshot);
    resumed.step();
    expect(resumed.stepsTaken).toBe(6);
  }, 30_000);

  it('reports a thread ended between steps at the next step, once every thread has ended', async () => {
    const m = model('gru');
    const threads = await startTrainingThreads({ count: 2, model: m });
    const trainer = new Trainer({
      ...options(m, threads),
      afterStep: async (t) => {
        if (t.stepsTaken === 3) await (threads.threads[0] as unknown as { worker: { terminate(): Promise<number> } }).worker.terminate();
      },
    });
    const error = await trainer.run().then(
      () => null,
      (e: unknown) => e,
    );
    expect((error as WeftError).message).toMatch(
      /^Training thread failed at training thread 2 of 2, after step 3: expected its shards' gradients, received it exited \(code \d+\)/,
    );
    expect(await threadsAlive(threads)).toBe(0);
  }, 30_000);

  it("ends the step with the trainer's own error when a shard of its own thread throws, and the threads still close", async () => {
    // Stream 1 is in shard 0 (rows 0–3), which the trainer's thread computes.
    const tokens = corpus(6000);
    tokens[1 * 500 + 6 * 4] = 11;
    const data = () => streamBatches({ kind: 'tokens', tokens, vocabulary: 12 }, { streams: 12, window: 6 });
    const alone = await new Trainer(options(model('gru'), undefined, data())).run().then(
      () => null,
      (e: unknown) => e,
    );
    const m = model('gru');
    const threads = await startTrainingThreads({ count: 2, model: m });
    const error = await new Trainer(options(m, threads, data())).run().then(
      () => null,
      (e: unknown) => e,
    );
    expect((error as WeftError).message).toBe((alone as WeftError).message);
    expect((error as WeftError).message).toMatch(/^Invalid argument at model\.input\.tokens\[\d+\]: expected an id in \[0, 11\), received 11$/);
    await threads.close();
    expect(await threadsAlive(threads)).toBe(0);
  }, 30_000);

  it('refuses a thread count of 0 in one line', async () => {
    await expect(startTrainingThreads({ count: 0, model: model('gru') })).rejects.toThrowError(
      'Invalid option at trainingThreads.count: expected a whole number ≥ 1, received 0',
    );
  });
});

/** Threads of `threads` still running: each answers a terminate() with its exit code, undefined once it has ended. */
async function threadsAlive(threads: TrainingThreads): Promise<number> {
  const codes = await Promise.all(threads.threads.map((t) => (t as unknown as { worker: { terminate(): Promise<number | undefined> } }).worker.terminate()));
  return codes.filter((code) => code !== undefined).length;
}
