import { describe, expect, it } from 'vitest';
import { Random, randomUniform, tensor, trainable } from '@weft/core';
import { AdamRule, SgdRule } from '@weft/optim';

describe('what every update rule shares', () => {
  it("round-trips its state as plain data, continues identically, and refuses another rule's state", () => {
    const random = new Random(4);
    const a = trainable(randomUniform([6], random, -1, 1, 'f32'));
    const b = trainable(tensor(Array.from(a.data), [6], 'f32'));
    const first = new AdamRule({ rate: 0.05 });
    const grads = Array.from({ length: 5 }, () => Array.from({ length: 6 }, () => random.between(-1, 1)));
    for (let s = 0; s < 2; s++) {
      a.gradient!.set(grads[s]);
      first.update([a]);
      b.gradient!.set(grads[s]);
    }
    const second = new AdamRule({ rate: 0.05 });
    const warm = new AdamRule({ rate: 0.05 });
    warm.update([b]);
    b.data.set(a.data);
    second.restore(JSON.parse(JSON.stringify(first.state())), [b]);
    for (let s = 2; s < 5; s++) {
      a.gradient!.set(grads[s]);
      first.update([a]);
      b.gradient!.set(grads[s]);
      second.update([b]);
    }
    expect(Array.from(b.data)).toEqual(Array.from(a.data));
    expect(() => new SgdRule({ rate: 0.1 }).restore(first.state(), [b])).toThrowError('Invalid argument at optimizer state.kind: expected sgd, received adam');
  });

  it("refuses bad options by the rule's and the option's name", () => {
    expect(() => new AdamRule({ rate: 0 })).toThrowError('Invalid option at adam.rate: expected a finite number > 0, received 0');
    expect(() => new AdamRule({ rate: 0.1, beta1: 1 })).toThrowError('Invalid option at adam.beta1: expected a number in [0, 1), received 1');
    expect(() => new SgdRule({ rate: Number.NaN })).toThrowError('Invalid option at sgd.rate: expected a finite number > 0, received NaN');
  });
});
