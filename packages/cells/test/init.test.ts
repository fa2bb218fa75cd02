import { describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { GruCell, LstmCell, PlainCell, glorotBound, orthogonalMatrix } from '@weft/cells';

/** WᵀW for the H×H block at columns [c0, c0 + H) of a [H, stride] row-major buffer, in f64. */
function gram(data: ArrayLike<number>, stride: number, size: number, c0: number): number[][] {
  return Array.from({ length: size }, (_, i) =>
    Array.from({ length: size }, (_, j) => {
      let s = 0;
      for (let r = 0; r < size; r++) s += data[r * stride + c0 + i] * data[r * stride + c0 + j];
      return s;
    }),
  );
}

function worstFromIdentity(m: number[][]): number {
  let worst = 0;
  m.forEach((row, i) =>
    row.forEach((v, j) => {
      worst = Math.max(worst, Math.abs(v - (i === j ? 1 : 0)));
    }),
  );
  return worst;
}

describe('initialisation', () => {
  // Saxe, McClelland & Ganguli 2014: orthogonal recurrent weights, WᵀW = I.
  it('makes every recurrent gate block orthogonal: WᵀW = I within 1e-5 (f32) and 1e-12 (f64 generator)', () => {
    expect(worstFromIdentity(gram(orthogonalMatrix(64, new Random(1)), 64, 64, 0))).toBeLessThan(1e-12);
    const lstm = new LstmCell({ inputWidth: 10, hidden: 32, random: 5 });
    for (let gate = 0; gate < 4; gate++) expect(worstFromIdentity(gram(lstm.recurrent.data, 128, 32, gate * 32))).toBeLessThan(1e-5);
    const gru = new GruCell({ inputWidth: 10, hidden: 16, random: 6 });
    for (let gate = 0; gate < 2; gate++) expect(worstFromIdentity(gram(gru.recurrent.data, 32, 16, gate * 16))).toBeLessThan(1e-5);
    expect(worstFromIdentity(gram(gru.recurrentCandidate.data, 16, 16, 0))).toBeLessThan(1e-5);
    const plain = new PlainCell({ inputWidth: 3, hidden: 20, random: 7 });
    expect(worstFromIdentity(gram(plain.recurrent.data, 20, 20, 0))).toBeLessThan(1e-5);
  });

  // Glorot & Bengio 2010, eq. 16: U(−b, b), b = √(6 / (fan_in + fan_out)).
  it('draws input weights Glorot-uniform within √(6/(fan_in+fan_out)), filling the range', () => {
    const lstm = new LstmCell({ inputWidth: 40, hidden: 24, random: 8 });
    const bound = Math.sqrt(6 / (40 + 24));
    expect(glorotBound(40, 24)).toBe(bound);
    const values = Array.from(lstm.input.data);
    expect(Math.max(...values.map(Math.abs))).toBeLessThanOrEqual(bound);
    // 3,840 uniform draws: the extremes come within 2% of the bound, and the variance is b²/3 within 5%.
    expect(Math.max(...values)).toBeGreaterThan(0.98 * bound);
    expect(Math.min(...values)).toBeLessThan(-0.98 * bound);
    const variance = values.reduce((s, v) => s + v * v, 0) / values.length;
    expect(Math.abs(variance / ((bound * bound) / 3) - 1)).toBeLessThan(0.05);
  });

  // Le, Jaitly & Hinton 2015: ReLU recurrent weights start at the identity, biases at 0.
  it('starts the ReLU cell recurrent matrix at the identity', () => {
    const cell = new PlainCell({ inputWidth: 3, hidden: 5, activation: 'relu' });
    expect(Array.from(cell.recurrent.data)).toEqual(Array.from({ length: 25 }, (_, i) => (i % 6 === 0 ? 1 : 0)));
    expect(Array.from(cell.bias.data)).toEqual([0, 0, 0, 0, 0]);
  });

  // Jozefowicz, Zaremba & Sutskever 2015: forget-gate bias 1.
  it('sets the LSTM forget-gate bias to 1 by default and every other bias to 0', () => {
    const cell = new LstmCell({ inputWidth: 2, hidden: 3 });
    expect(Array.from(cell.bias.data)).toEqual([0, 0, 0, 1, 1, 1, 0, 0, 0, 0, 0, 0]);
    const custom = new LstmCell({ inputWidth: 2, hidden: 2, forgetBias: 2.5 });
    expect(Array.from(custom.bias.data)).toEqual([0, 0, 2.5, 2.5, 0, 0, 0, 0]);
  });

  it('is deterministic: one seed, the same bits', () => {
    const a = new GruCell({ inputWidth: 4, hidden: 6, random: 'same' });
    const b = new GruCell({ inputWidth: 4, hidden: 6, random: 'same' });
    a.parameters().forEach((p, i) => expect(Array.from(p.tensor.data)).toEqual(Array.from(b.parameters()[i].tensor.data)));
  });
});
