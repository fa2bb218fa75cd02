/**
 * The translator (translate.ts) applies a weight file's metadata: normalisation (x − mean) / deviation on the
 * way in and its inverse on the way out, each target with its own column's statistics (common practice: the
 * z-score and its inverse), worked by hand here; and tokens split as training split them, with unknown pieces
 * counted and mapped to the unknown token.
 */
import { execFileSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { weftErrorMessage } from '../../../tests/helpers/errors.js';
import { UNKNOWN_TOKEN, createTranslator } from '@weft/io';

describe('createTranslator', () => {
  const forecast = createTranslator({
    task: 'forecast',
    columns: ['inflow', 'level'],
    targetColumns: ['level'],
    horizon: 1,
    normalisation: { mean: [3, 50], deviation: [1, 10] },
  });

  it('normalises named raw values and de-normalises each target with its own column (here the second)', () => {
    expect(Array.from(forecast.inputs({ level: 60, inflow: '2.5' }))).toEqual([-0.5, 1]);
    expect(forecast.outputs([0.25])).toEqual({ level: 52.5 });
    expect(forecast.inputNames).toEqual(['inflow', 'level']);
    expect(forecast.outputNames).toEqual(['level']);
  });

  it('refuses a missing column, a value that is not a number and a buffer of the wrong size, naming each', () => {
    const message = weftErrorMessage;
    expect(message(() => forecast.inputs({ level: 1 }, undefined, 'reading 4'))).toBe(
      'Bad data at reading 4.inflow: expected a value for column "inflow", which the model reads, received nothing',
    );
    expect(message(() => forecast.inputs({ level: 'high', inflow: 1 }))).toBe('Bad data at row.level: expected a finite number, received "high"');
    expect(message(() => forecast.inputs({ level: 1, inflow: 1 }, new Float32Array(3)))).toBe('Shape mismatch at row (into): expected 2 numbers, received 3');
  });

  it("carries a stream model's missing reading from the column's last value (its fallback before any) and flags it after the columns", () => {
    const gappy = createTranslator({
      task: 'forecast',
      columns: ['inflow', 'level'],
      targetColumns: ['level'],
      horizon: 1,
      normalisation: { mean: [3, 50], deviation: [1, 10] },
      missing: { rule: 'carry', gapLimit: 100, flagged: [1], fallback: [3, 40], markers: ['?'] },
    });
    expect(gappy.missing?.flagged).toEqual([1]);
    // Level missing before any reading: its fallback, 40 → −1; flagged.
    expect(Array.from(gappy.inputs({ inflow: 4, level: 'NA' }))).toEqual([1, -1, 1]);
    expect(Array.from(gappy.inputs({ inflow: 2, level: 70 }))).toEqual([-1, 2, 0]);
    // Then the last value, 70, carried; a marker given for the model and NaN both count.
    expect(Array.from(gappy.inputs({ inflow: 3, level: '?' }))).toEqual([0, 2, 1]);
    expect(Array.from(gappy.inputs({ inflow: Number.NaN, level: Number.NaN }))).toEqual([0, 2, 1]);
    expect(weftErrorMessage(() => gappy.inputs({ inflow: 3, level: 'high' }))).toBe(
      'Bad data at row.level: expected a finite number or a missing-reading marker, received "high"',
    );
    expect(forecast.missing).toBeNull();
  });

  it('undoes a target transform from the level now: differences add the change, log returns scale by its exponential', () => {
    const base = { task: 'forecast', columns: ['level'], targetColumns: ['level'], horizon: 1, normalisation: { mean: [0], deviation: [1] } };
    const differences = createTranslator({ ...base, targetTransform: { kind: 'differences', mean: [1], deviation: [2] } });
    differences.inputs({ level: 10 });
    // change = 0.5 · 2 + 1 = 2, from the last row given to inputs(), or from a row given here.
    expect(differences.outputs([0.5])).toEqual({ level: 12 });
    expect(differences.outputs([0.5], { level: 20 })).toEqual({ level: 22 });
    const returns = createTranslator({ ...base, targetTransform: { kind: 'log-returns', mean: [0], deviation: [Math.log(1.1)] } });
    expect(returns.outputs([1], { level: 10 }).level).toBeCloseTo(11, 12);
    expect(() => returns.outputs([1])).toThrowError(
      'Bad data at outputs.from.level: expected the value of "level" now (the model forecasts its change), received no row given to inputs() yet',
    );
  });

  it('splits text as training did, counts unknown pieces and maps them to the unknown token', () => {
    const characters = createTranslator({ task: 'next-token', tokens: 'characters', vocabulary: [UNKNOWN_TOKEN, 'a', 'b', 'é'] });
    const { ids, pieces, unknown } = characters.tokenIds('abé!a');
    expect(Array.from(ids)).toEqual([1, 2, 3, 0, 1]);
    expect(pieces).toEqual(['a', 'b', 'é', '!', 'a']);
    expect(unknown).toBe(1);
    expect(characters.tokenText(3)).toBe('é');
    expect(() => characters.tokenText(4)).toThrowError('Bad data at tokenText.id: expected a token id in [0, 4), received 4');
    const words = createTranslator({ task: 'next-token', tokens: 'words', vocabulary: [UNKNOWN_TOKEN, 'warp', 'weft'] });
    expect(Array.from(words.tokenIds('  warp weft\nloom ').ids)).toEqual([1, 2, 0]);
  });

  it('gives the same numbers through the allocation-free forms: inputsFromNumbers, outputsInto and tokenId', () => {
    const row = { inflow: 12, level: 3.5 };
    const named = Float32Array.from(forecast.inputs(row));
    expect(Array.from(forecast.inputsFromNumbers(Float64Array.of(12, 3.5), new Float32Array(2)))).toEqual(Array.from(named));
    const into = new Float64Array(1);
    forecast.outputsInto(Float32Array.of(0.25), into);
    expect(into[0]).toBe(forecast.outputs(Float32Array.of(0.25)).level);
    expect(() => forecast.inputsFromNumbers(Float64Array.of(1), new Float32Array(2))).toThrowError(
      /^Shape mismatch at inputsFromNumbers\.values: expected 2 numbers \(inflow, level\), received 1$/,
    );
    expect(() => forecast.inputsFromNumbers(Float64Array.of(1, Infinity), new Float32Array(2))).toThrowError(
      /^Bad data at values\[1\] \(level\): expected a finite number, received Infinity$/,
    );
    const text = createTranslator({ task: 'next-token', tokens: 'characters', vocabulary: [UNKNOWN_TOKEN, 'a', 'b'] });
    expect(['a', 'b', 'z'].map((c) => text.tokenId(c))).toEqual(Array.from(text.tokenIds('abz').ids));
  });

  it('takes 100,000 readings of a values model and of a text model with a runtime stream and makes no garbage (node --expose-gc, a 1 MB young generation)', () => {
    const probe = fileURLToPath(new URL('./translate-probe.mjs', import.meta.url));
    const output = execFileSync(process.execPath, ['--expose-gc', '--max-semi-space-size=1', probe], { encoding: 'utf8' });
    const { collections, readings, control } = JSON.parse(output.trim().split('\n').at(-1)!) as { collections: number; readings: number; control: number };
    console.log(`${collections} collections over ${readings} readings of each model; ${control} when each reading also makes one small object`);
    expect(control).toBeGreaterThan(0);
    expect(collections).toBe(0);
  });
});
