/**
 * Every kernel's aliasing statement (its comment in core/src/kernels) proved on both backends' tables: where the
 * comment says an output may alias an input, a run with the output and the input one array gives the same bits as
 * a run on two arrays (the output starting as a copy of the input); where it says they must not, an aliased run
 * gives a different result, so the rule is needed. The WebAssembly runs take their arrays from the backend's own
 * memory, so its SIMD twins run. Every name in the kernel table has an entry here, so a new kernel must state its
 * rule before the suite passes.
 */
import { describe, expect, it } from 'vitest';
import { KERNEL_NAMES, Random, createWebAssemblyBackend, javascriptKernels, webAssemblyUnavailable } from '@weft/core';
import type { FloatArray, KernelName, KernelTable } from '@weft/core';
import { createForwardWebAssembly, forwardWebAssemblyUnavailable, javascriptForward } from '@weft/core/forward';
import type { ForwardBackend } from '@weft/core/forward';

/** One aliasing statement: the arrays a kernel is run on, and which output array is made one with which input. */
interface Statement {
  /** `may`: aliased and separate runs agree bit for bit; `mustNot`: they differ. */
  readonly rule: 'may' | 'mustNot';
  /** What the comment says, for the test's name. */
  readonly says: string;
  /** The arrays' lengths; null for an argument given as null. */
  readonly lengths: readonly (number | null)[];
  /** Pairs [output, input]: in the aliased run the output is the input array itself. */
  readonly aliases: readonly (readonly [number, number])[];
  /** Values drawn for the arrays (default [−2, 2]). */
  readonly range?: readonly [number, number];
  readonly run: (k: KernelTable, x: FloatArray[]) => void;
}

const rows = 3;
const hidden = 4;
const n = rows * hidden;
/** Row 1 is past its length at step 1, so a held row is among the rows. */
const at = { rows, hidden, lengths: Int32Array.of(3, 1, 2), step: 1 };
const unary = (name: 'sigmoid' | 'tanh' | 'relu' | 'exp' | 'log'): Statement => ({
  rule: 'may',
  says: 'out may alias a',
  lengths: [n, n],
  aliases: [[0, 1]],
  range: name === 'log' ? [0.1, 3] : undefined,
  run: (k, [o, a]) => k[name](o, a, n),
});
const gradient = (name: 'sigmoidGradientInto' | 'tanhGradientInto' | 'reluGradientInto'): Statement[] => [
  { rule: 'may', says: 'inputGradient may alias outputGradient', lengths: [n, n, n], aliases: [[0, 1]], run: (k, [g, d, y]) => k[name](g, d, y, n) },
  { rule: 'may', says: 'inputGradient may alias y', lengths: [n, n, n], aliases: [[0, 2]], range: [0, 1], run: (k, [g, d, y]) => k[name](g, d, y, n) },
];
const binary = (name: 'add' | 'subtract' | 'multiply' | 'multiplyInto'): Statement[] => [
  { rule: 'may', says: 'out may alias a', lengths: [n, n, n], aliases: [[0, 1]], run: (k, [o, a, b]) => k[name](o, a, b, n) },
  { rule: 'may', says: 'out may alias b', lengths: [n, n, n], aliases: [[0, 2]], run: (k, [o, a, b]) => k[name](o, a, b, n) },
];
const rule = (name: 'sgdUpdate' | 'nesterovUpdate'): Statement => ({
  rule: 'may',
  says: 'the values may alias their gradient',
  lengths: [n, n, n],
  aliases: [[0, 1]],
  run: (k, [values, gradient, velocity]) => k[name]({ values, gradient, velocity }, n, { rate: 0.1, decay: 0.01, mu: 0.9, kappa: 0.001 }),
});
/** Columns 1 and 2 of a [3, 4] matrix beside a [3, 2] one; aliased, the narrow matrix is the wide one's start. */
const block = { rows: 3, cols: 2, width: 4, first: 1 };
const columnStatement = (name: 'copyToColumns' | 'copyFromColumns' | 'addToColumns' | 'addFromColumns'): Statement =>
  name === 'copyToColumns' || name === 'addToColumns'
    ? {
        rule: 'mustNot',
        says: 'the two matrices must not overlap',
        lengths: [12, 12],
        aliases: [[0, 1]],
        run: (k, [wide, narrow]) => k[name](wide, narrow, block),
      }
    : {
        rule: 'may',
        says: "the narrow matrix may be the wide one's array from its start",
        lengths: [12, 12],
        aliases: [[0, 1]],
        run: (k, [narrow, wide]) => k[name](narrow, wide, block),
      };
/** Attention over 4 sources for 2 query steps of 3 rows, the rows' lengths 4, 2 and 3; depth and width 8 (whole vectors). */
const attention = { steps: 2, rows: 3, sources: 4, depth: 8, width: 8, lengths: Int32Array.of(4, 2, 3) };
const scoreCount = 2 * 3 * 4;
const queryCount = 2 * 3 * 8;
const keyCount = 4 * 3 * 8;
/** A square product's shape (4 rows: the packed path). */
const square = { rows: 4, inner: 4, cols: 4 };
/** One row times an 8 × 8 matrix: the path that reads its operands in place, where an aliased out overwrites them. */
const row = { rows: 1, inner: 8, cols: 8 };

function lstmBackward(k: KernelTable, [gg, hg, cg, pg, dh, dc, gates, tc, cp, c, p]: FloatArray[]): void {
  k.lstmStepBackward({ gates: gg, hPrevious: hg, cPrevious: cg, peephole: pg }, { h: dh, c: dc }, { gates, tanhCell: tc, cPrevious: cp, c, peephole: p }, at);
}
function gruBackward(k: KernelTable, [ur, cg, pg, hpg, dh, gates, candidate, hp]: FloatArray[]): void {
  k.gruBackwardCandidate({ updateReset: ur, candidate: cg, product: pg, hPrevious: hpg }, dh, { gates, candidate, hPrevious: hp }, 'resetAfter', at);
}
function gruReset(k: KernelTable, [ur, hpg, rhg, gates, hp]: FloatArray[]): void {
  k.gruBackwardReset({ updateReset: ur, candidate: ur, product: ur, hPrevious: hpg }, rhg, { gates, candidate: hp, hPrevious: hp }, at);
}

const statements: { readonly [K in KernelName]: readonly Statement[] } = {
  matmul: [
    { rule: 'mustNot', says: 'out must not alias a', lengths: [8, 8, 64], aliases: [[0, 1]], run: (k, [o, a, b]) => k.matmul(o, a, b, row) },
    {
      rule: 'may',
      says: 'a and b may be the same array',
      lengths: [16, 16, 16],
      aliases: [[2, 1]],
      run: (k, [o, a, b]) => k.matmul(o, a, b, { ...square, transposed: 'b' }),
    },
  ],
  matmulInto: [
    { rule: 'mustNot', says: 'out must not alias a', lengths: [8, 8, 64], aliases: [[0, 1]], run: (k, [o, a, b]) => k.matmulInto(o, a, b, row) },
    { rule: 'may', says: 'a and b may be the same array', lengths: [16, 16, 16], aliases: [[2, 1]], run: (k, [o, a, b]) => k.matmulInto(o, a, b, square) },
  ],
  add: binary('add'),
  subtract: binary('subtract'),
  multiply: binary('multiply'),
  scale: [{ rule: 'may', says: 'out may alias a', lengths: [n, n], aliases: [[0, 1]], run: (k, [o, a]) => k.scale(o, a, -0.7, n) }],
  addInto: [{ rule: 'may', says: 'out may alias a', lengths: [n, n], aliases: [[0, 1]], run: (k, [o, a]) => k.addInto(o, a, n) }],
  addScaledInto: [{ rule: 'may', says: 'out may alias a', lengths: [n, n], aliases: [[0, 1]], run: (k, [o, a]) => k.addScaledInto(o, a, 1.3, n) }],
  multiplyInto: binary('multiplyInto'),
  addRow: [
    { rule: 'may', says: 'out may alias a', lengths: [n, n, hidden], aliases: [[0, 1]], run: (k, [o, a, r]) => k.addRow(o, a, r, rows, hidden) },
    { rule: 'mustNot', says: 'out must not alias row', lengths: [n, n, n], aliases: [[0, 2]], run: (k, [o, a, r]) => k.addRow(o, a, r, rows, hidden) },
  ],
  sumRows: [{ rule: 'mustNot', says: 'out must not alias a', lengths: [n, n], aliases: [[0, 1]], run: (k, [o, a]) => k.sumRows(o, a, rows, hidden) }],
  sumRowsInto: [
    { rule: 'may', says: 'out may alias a (its first row)', lengths: [n, n], aliases: [[0, 1]], run: (k, [o, a]) => k.sumRowsInto(o, a, rows, hidden) },
  ],
  copyAt: [{ rule: 'mustNot', says: 'target must not overlap source', lengths: [n, n], aliases: [[0, 1]], run: (k, [t, s]) => k.copyAt(t, 1, s, 0, n - 1) }],
  addAt: [{ rule: 'mustNot', says: 'target must not overlap source', lengths: [n, n], aliases: [[0, 1]], run: (k, [t, s]) => k.addAt(t, 1, s, 0, n - 1) }],
  sigmoid: [unary('sigmoid')],
  tanh: [unary('tanh')],
  relu: [unary('relu')],
  exp: [unary('exp')],
  log: [unary('log')],
  sigmoidGradientInto: gradient('sigmoidGradientInto'),
  tanhGradientInto: gradient('tanhGradientInto'),
  reluGradientInto: gradient('reluGradientInto'),
  // The reductions write nothing; limitEntries works in place on its one array. Their statement: no output array.
  sum: [],
  dot: [],
  sumOfSquares: [],
  maxAbs: [],
  firstNonFinite: [],
  limitEntries: [],
  crossEntropyRows: [
    {
      rule: 'may',
      says: 'probabilities may alias logits',
      lengths: [rows, n, n],
      aliases: [[1, 2]],
      run: (k, [losses, p, logits]) => k.crossEntropyRows(losses, p, logits, Int32Array.of(0, 3, 1), rows, hidden),
    },
    {
      rule: 'mustNot',
      says: 'losses must not alias probabilities',
      lengths: [n, n, n],
      aliases: [[0, 1]],
      run: (k, [losses, p, logits]) => k.crossEntropyRows(losses, p, logits, Int32Array.of(0, 3, 1), rows, hidden),
    },
  ],
  copyToColumns: [columnStatement('copyToColumns')],
  copyFromColumns: [columnStatement('copyFromColumns')],
  addToColumns: [columnStatement('addToColumns')],
  addFromColumns: [columnStatement('addFromColumns')],
  attentionScores: [
    {
      rule: 'mustNot',
      says: 'scores must not alias query',
      lengths: [scoreCount, queryCount, keyCount],
      aliases: [[0, 1]],
      run: (k, [scores, query, keys]) => k.attentionScores(scores, query, keys, attention),
    },
  ],
  attentionScoresAdditive: [
    {
      rule: 'mustNot',
      says: 'scores must not alias an input',
      lengths: [scoreCount, queryCount, keyCount, 8],
      aliases: [[0, 1]],
      run: (k, [scores, query, keys, vector]) => k.attentionScoresAdditive(scores, { query, keys, vector }, attention),
    },
  ],
  softmaxWithinLengths: [
    {
      rule: 'may',
      says: 'weights may alias scores',
      lengths: [scoreCount, scoreCount],
      aliases: [[0, 1]],
      run: (k, [weights, scores]) => k.softmaxWithinLengths(weights, scores, attention),
    },
  ],
  attentionContext: [
    {
      rule: 'mustNot',
      says: 'context must not alias values',
      lengths: [queryCount, scoreCount, keyCount],
      aliases: [[0, 2]],
      range: [0, 1],
      run: (k, [context, weights, values]) => k.attentionContext(context, weights, values, attention),
    },
  ],
  attentionContextBackward: [
    {
      rule: 'mustNot',
      says: 'weightGradient must not alias weights',
      lengths: [scoreCount, keyCount, queryCount, scoreCount, keyCount],
      aliases: [[0, 3]],
      range: [0, 1],
      run: (k, [gw, gv, arriving, weights, values]) => k.attentionContextBackward(gw, gv, arriving, weights, values, attention),
    },
  ],
  softmaxWithinLengthsBackward: [
    {
      rule: 'may',
      says: 'scoreGradient may alias weightGradient',
      lengths: [scoreCount, scoreCount, scoreCount],
      aliases: [[0, 1]],
      range: [0, 1],
      run: (k, [ge, gw, weights]) => k.softmaxWithinLengthsBackward(ge, gw, weights, attention),
    },
  ],
  attentionScoresBackward: [
    {
      rule: 'mustNot',
      says: 'queryGradient must not alias keys',
      lengths: [keyCount, keyCount, scoreCount, queryCount, keyCount],
      aliases: [[0, 4]],
      run: (k, [gq, gk, ge, query, keys]) => k.attentionScoresBackward(gq, gk, ge, query, keys, attention),
    },
  ],
  attentionScoresAdditiveBackward: [
    {
      rule: 'mustNot',
      says: 'a gradient must not alias an input (here the keys’ gradient the keys, read again for the next query step)',
      lengths: [queryCount, keyCount, 8, scoreCount, queryCount, keyCount, 8],
      aliases: [[1, 5]],
      run: (k, [gq, gk, gv, ge, query, keys, vector]) =>
        k.attentionScoresAdditiveBackward({ query: gq, keys: gk, vector: gv }, ge, { query, keys, vector }, attention),
    },
  ],
  lstmStepForward: [
    {
      rule: 'may',
      says: 'out.h may be previous.h and out.c previous.c',
      lengths: [n, n, 4 * n, n, n, n, 3 * hidden],
      aliases: [
        [0, 4],
        [1, 5],
      ],
      run: (k, [h, c, gates, tanhCell, hp, cp, p]) => k.lstmStepForward({ h, c, gates, tanhCell }, { h: hp, c: cp }, p, at),
    },
  ],
  lstmStepBackward: [
    {
      rule: 'may',
      says: 'out.hPrevious may alias arriving.h and out.cPrevious arriving.c',
      lengths: [4 * n, n, n, 3 * hidden, n, n, 4 * n, n, n, n, 3 * hidden],
      aliases: [
        [1, 4],
        [2, 5],
      ],
      range: [0.05, 0.95],
      run: lstmBackward,
    },
    {
      rule: 'mustNot',
      says: 'out.peephole must not alias the peephole',
      lengths: [4 * n, n, n, 3 * hidden, n, n, 4 * n, n, n, n, 3 * hidden],
      aliases: [[3, 10]],
      range: [0.05, 0.95],
      run: lstmBackward,
    },
  ],
  gruUpdateReset: [
    {
      rule: 'may',
      says: 'gates may alias projected at offset 0',
      lengths: [3 * n, 3 * n, 2 * n],
      aliases: [[0, 1]],
      run: (k, [gates, projected, product]) => k.gruUpdateReset(gates, projected, 0, product, rows, hidden),
    },
  ],
  gruResetHidden: [
    {
      rule: 'may',
      says: 'resetHidden may be hPrevious',
      lengths: [n, 3 * n, n],
      aliases: [[0, 2]],
      run: (k, [rh, gates, hp]) => k.gruResetHidden(rh, gates, hp, rows, hidden),
    },
  ],
  gruStepFinish: [
    {
      rule: 'may',
      says: 'out.h may be inputs.hPrevious',
      lengths: [n, 3 * n, 3 * n, n, n],
      aliases: [[0, 4]],
      run: (k, [h, gates, projected, candidate, hp]) =>
        k.gruStepFinish({ h, gates }, { projected, projectedOffset: 0, candidate, hPrevious: hp }, 'resetAfter', at),
    },
  ],
  gruBackwardCandidate: [
    {
      rule: 'may',
      says: 'out.hPrevious may alias the arriving gradient',
      lengths: [2 * n, n, n, n, n, 3 * n, n, n],
      aliases: [[3, 4]],
      range: [0.05, 0.95],
      run: gruBackward,
    },
    {
      rule: 'mustNot',
      says: 'out.product must not alias saved.candidate',
      lengths: [2 * n, n, n, n, n, 3 * n, n, n],
      aliases: [[2, 6]],
      range: [0.05, 0.95],
      run: gruBackward,
    },
  ],
  gruBackwardReset: [
    {
      rule: 'may',
      says: 'out.hPrevious may alias the gradient of r ⊙ h₋',
      lengths: [2 * n, n, n, 3 * n, n],
      aliases: [[1, 2]],
      range: [0.05, 0.95],
      run: gruReset,
    },
    { rule: 'may', says: 'out.hPrevious may alias saved.hPrevious', lengths: [2 * n, n, n, 3 * n, n], aliases: [[1, 4]], range: [0.05, 0.95], run: gruReset },
  ],
  // h carries the pre-activation in and the new state out, so it cannot also be h₋ by meaning (the layer step keeps a
  // pre-activation buffer of its own); no order of reads and writes is at stake.
  plainStepForward: [],
  plainStepBackward: [
    {
      rule: 'mustNot',
      says: 'the pre-activation gradient must not alias the arriving gradient',
      lengths: [n, n, n, n],
      aliases: [[0, 2]],
      run: (k, [pre, hpg, dh, h]) => k.plainStepBackward({ pre, hPrevious: hpg }, dh, h, 'tanh', at),
    },
  ],
  adamUpdate: [
    {
      rule: 'may',
      says: 'the values may alias their gradient',
      lengths: [n, n, n, n],
      aliases: [[0, 1]],
      range: [0.1, 2],
      run: (k, [values, gradient, firstMoment, secondMoment]) =>
        k.adamUpdate({ values, gradient, firstMoment, secondMoment }, n, {
          beta1: 0.9,
          beta2: 0.999,
          correction1: 0.19,
          correction2: 0.002,
          rate: 0.01,
          decay: 0.001,
          kappa: 0.001,
          epsilon: 1e-8,
        }),
    },
  ],
  sgdUpdate: [rule('sgdUpdate')],
  nesterovUpdate: [rule('nesterovUpdate')],
};

interface Maker {
  readonly name: string;
  readonly kernels: KernelTable;
  readonly make: (length: number) => FloatArray;
}

const makers: Maker[] = [
  { name: 'JavaScript (f64)', kernels: javascriptKernels, make: (length) => new Float64Array(length) },
  { name: 'JavaScript (f32)', kernels: javascriptKernels, make: (length) => new Float32Array(length) },
];
if (webAssemblyUnavailable() === null) {
  const backend = createWebAssemblyBackend({ memoryBytes: 16 * 1048576 });
  makers.push({ name: 'WebAssembly (its own memory: the SIMD twins)', kernels: backend.kernels, make: (length) => backend.pool.take('f32', length) });
}

/** Runs a statement's kernel separately and aliased; returns both runs' outputs (the arrays no alias replaced). */
function runBoth(statement: Statement, maker: Maker, seed: string): { separate: number[][]; aliased: number[][] } {
  const random = new Random(seed);
  const [low, high] = statement.range ?? [-2, 2];
  const values = statement.lengths.map((length) => (length === null ? null : Array.from({ length }, () => random.between(low, high))));
  const fresh = (): FloatArray[] =>
    values.map((v) => {
      const array = maker.make(v?.length ?? 0);
      if (v !== null) array.set(v);
      return array;
    });
  const separate = fresh();
  // The separate run's output starts as a copy of the input it would alias, so both runs start from the same values.
  for (const [output, input] of statement.aliases) separate[output].set(separate[input].subarray(0, separate[output].length));
  statement.run(maker.kernels, separate);
  const aliased = fresh();
  for (const [output, input] of statement.aliases) aliased[output] = aliased[input];
  statement.run(maker.kernels, aliased);
  const inputs = new Set(statement.aliases.map(([, input]) => input));
  const kept = (arrays: FloatArray[]) => arrays.filter((_, i) => !inputs.has(i)).map((a) => Array.from(a));
  // An aliased output is read from the input array it became (the same object sits at the output's index).
  return { separate: kept(separate), aliased: kept(aliased) };
}

describe("the kernels' aliasing statements, on both backends", () => {
  it('cover every kernel of the table', () => {
    expect(Object.keys(statements).sort()).toEqual([...KERNEL_NAMES].sort());
  });

  for (const maker of makers) {
    for (const [kernel, list] of Object.entries(statements) as [KernelName, readonly Statement[]][]) {
      for (const statement of list) {
        const verb = statement.rule === 'may' ? 'gives the same bits aliased' : 'gives a different result aliased';
        it(`${maker.name}: ${kernel} ${verb}, as its comment says (${statement.says})`, () => {
          const { separate, aliased } = runBoth(statement, maker, `${kernel}-${statement.says}`);
          if (statement.rule === 'may') expect(aliased).toEqual(separate);
          else expect(aliased).not.toEqual(separate);
        });
      }
    }
  }
});

describe("the runtime's forward kernels' aliasing statements, on both forward backends", () => {
  const forwards: ForwardBackend[] = [javascriptForward];
  if (forwardWebAssemblyUnavailable() === null) forwards.push(createForwardWebAssembly({ memoryBytes: 4 * 1048576 }));
  for (const forward of forwards) {
    it(`${forward.name}: affineRows gives a different result when out aliases x, as its comment warns (one row, read in place)`, () => {
      const random = new Random('affine-alias');
      const values = (length: number) => Array.from({ length }, () => random.between(-2, 2));
      // 32 columns: more than one block of columns, so a block stored over x is read by the next.
      const x = values(32);
      const weights = forward.matrix(values(32 * 32), 32, 32);
      const bias = forward.floats(32);
      const input = forward.floats(32);
      input.set(x);
      const separate = forward.floats(32);
      forward.kernels.affineRows(separate, input, weights, bias, { rows: 1, inner: 32, cols: 32 });
      forward.kernels.affineRows(input, input, weights, bias, { rows: 1, inner: 32, cols: 32 });
      expect(Array.from(input)).not.toEqual(Array.from(separate));
    });
  }
  // The layer steps update their state in place by design; the ONNX-equation tests of each layer step
  // (kernels/*-step.test.ts, forward-webassembly.test.ts) run them that way.
});
