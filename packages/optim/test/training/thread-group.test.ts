/**
 * The thread group's protocol (training/thread-group.ts) with threads that are message channels in this process, so
 * every path can be driven: the same weights as the trainer's own thread, shared or sent in messages; a thread that
 * never answers ends the step after the time asked; one that fails to start is named.
 */
import { MessageChannel } from 'node:worker_threads';
import { describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { buildModel } from '@weft/cells';
import type { SequenceModel } from '@weft/cells';
import { AdamRule, Trainer, startThreadGroup, streamBatches } from '@weft/optim';
import { canShareMemory, serveShards } from '@weft/optim/internal';
import type { ThreadStart, TrainerOptions } from '@weft/optim';
import type { ShardThread } from '@weft/optim/internal';

function model(): SequenceModel {
  return buildModel(
    { input: { kind: 'embedding', vocabulary: 7, width: 4 }, layers: [{ cell: 'gru', hidden: 8 }], dropout: 0.1, readout: { width: 7 } },
    { seed: 1 },
  );
}

function options(m: SequenceModel): TrainerOptions {
  const random = new Random('group');
  const tokens = Int32Array.from({ length: 3000 }, () => random.integer(7));
  return {
    model: m,
    data: streamBatches({ kind: 'tokens', tokens, vocabulary: 7 }, { streams: 6, window: 5 }),
    optimizer: new AdamRule({ rate: 0.01 }),
    epochs: 1,
    seed: 2,
    shardRows: 2,
  };
}

/** A thread that is a message channel served in this process; `silent` threads never answer a step. */
function channelThread(start: ThreadStart, silent = false): ShardThread {
  const { port1, port2 } = new MessageChannel();
  serveShards(
    {
      post: (message, transfer) => (silent && (message as { step?: number }).step !== undefined ? undefined : port2.postMessage(message, transfer)),
      listen: (f) => port2.on('message', f),
    },
    start,
  );
  return {
    post: (message, transfer) => port1.postMessage(message, transfer),
    listen: (onMessage) => port1.on('message', onMessage),
    terminate: async () => {
      port1.close();
      port2.close();
    },
  };
}

describe('a group of training threads', () => {
  it("gives the trainer's own weights, bit for bit, with shared memory and with messages", async () => {
    expect(canShareMemory()).toBe(true);
    const alone = new Trainer(options(model()));
    for (let i = 0; i < 12; i++) alone.step();
    for (const [shared, callerComputes] of [
      [true, true],
      [false, true],
      [true, false],
      [false, false],
    ]) {
      const m = model();
      const group = await startThreadGroup({ count: 2, model: m, spawn: (start) => channelThread(start), shared, callerComputes });
      const trainer = new Trainer({ ...options(m), workers: group });
      for (let i = 0; i < 12; i++) await trainer.stepAsync();
      await group.close();
      expect(
        m.parameters().map((p) => Array.from(p.tensor.data)),
        `shared ${shared}, caller computes ${callerComputes}`,
      ).toEqual(alone.model.parameters().map((p) => Array.from(p.tensor.data)));
    }
  });

  it('ends a step that a thread does not answer after the time asked, naming the thread and the step', async () => {
    const m = model();
    let spawned = 0;
    // Beside the trainer's thread, the second of three starts, then never answers a step.
    const group = await startThreadGroup({ count: 3, model: m, spawn: (start) => channelThread(start, spawned++ === 1), answerWithinMs: 50 });
    const trainer = new Trainer({ ...options(m), workers: group });
    await expect(trainer.stepAsync()).rejects.toThrowError(
      "Training thread failed at training thread 3 of 3, step 1: expected its shards' gradients, received no answer within 50 ms (every thread was ended; the last checkpoint is as it was written)",
    );
  });

  it('names a thread that cannot build the model', async () => {
    const start = (): ShardThread => {
      const { port1, port2 } = new MessageChannel();
      port2.postMessage({ error: 'no such cell' });
      return { post: () => undefined, listen: (f) => port1.on('message', f), terminate: async () => port1.close() };
    };
    await expect(startThreadGroup({ count: 2, model: model(), spawn: start })).rejects.toThrowError(
      "Training thread failed at training thread 2 of 2, starting: expected its shards' gradients, received it could not start: no such cell",
    );
  });
});
