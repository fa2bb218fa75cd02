/**
 * What a sweep reads back (sweep-parts.ts): the grid's digest is the SHA-256 (node:crypto, FIPS 180-4) of its
 * combinations as JSON; a part is read only when made from this grid, each row matching its combination and holding
 * results as weft train writes them, else a one-line error naming the file; a finished combination of another grid
 * is not reused.
 */
import { createHash } from 'node:crypto';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { gridDigest, readDone, readPart } from '../src/sweep-parts.js';
import type { Combination } from '../src/sweep.js';

const folder = mkdtempSync(join(tmpdir(), 'weft-sweep-parts-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

const all: Combination[] = [
  { index: 0, data: 'a.csv', path: '/x/a.csv', flags: { hidden: 8 } },
  { index: 1, data: 'a.csv', path: '/x/a.csv', flags: { hidden: 16 } },
];
const results = {
  validationLoss: 0.5,
  steps: 10,
  stoppedBy: 'epochs',
  validationFigure: 1.2,
  metric: 'MAE',
  lowerIsBetter: true,
  model: 1.3,
  bestBaseline: { name: 'naive', value: 1.4 },
  out: 'c0.weft.json',
};

describe('what a sweep reads back', () => {
  it('digests the grid as SHA-256 of its combinations, so another grid has another digest', async () => {
    const expected = createHash('sha256')
      .update(JSON.stringify(all.map((c) => [c.index, c.data, c.flags])))
      .digest('hex');
    expect(await gridDigest(all)).toBe(expected);
    expect(await gridDigest([all[0]])).not.toBe(expected);
  });

  it("reads a part of this grid, and refuses another grid's, a row changed by hand and a broken file, in one line", async () => {
    const digest = await gridDigest(all);
    const path = join(folder, 'part-1-of-1.json');
    const write = (value: unknown) => writeFileSync(path, typeof value === 'string' ? value : JSON.stringify(value));
    write({
      grid: digest,
      rows: [
        { ...all[0], results, error: null },
        { ...all[1], results: null, error: 'weft: failed' },
      ],
    });
    expect(readPart(path, 'part-1-of-1.json', all, digest).map((r) => [r.index, r.results?.model ?? null, r.error])).toEqual([
      [0, 1.3, null],
      [1, null, 'weft: failed'],
    ]);
    write({ grid: 'f'.repeat(64), rows: [] });
    expect(() => readPart(path, 'part-1-of-1.json', all, digest)).toThrowError(
      'part-1-of-1.json: made from another grid (the grid changed since: run the parts again)',
    );
    write({ grid: digest, rows: [{ ...all[0], flags: { hidden: 9 }, results, error: null }] });
    expect(() => readPart(path, 'part-1-of-1.json', all, digest)).toThrowError(
      "part-1-of-1.json: combination 0 has other flags or data than the grid's (the grid changed: run the parts again)",
    );
    write({ grid: digest, rows: [{ ...all[0], results: { ...results, model: 'good' }, error: null }] });
    expect(() => readPart(path, 'part-1-of-1.json', all, digest)).toThrowError(
      'part-1-of-1.json: combination 0: its results are not those weft train writes (changed by hand?)',
    );
    write({ grid: digest, rows: [{ index: 7 }] });
    expect(() => readPart(path, 'part-1-of-1.json', all, digest)).toThrowError('part-1-of-1.json: a row that names no combination of the grid (index 7)');
    write('[{"index": 0');
    expect(() => readPart(path, 'part-1-of-1.json', all, digest)).toThrowError(/^part-1-of-1\.json: not a part's results \(/);
  });

  it('reuses a finished combination of this grid only', async () => {
    const digest = await gridDigest(all);
    const path = join(folder, 'c0.row.json');
    writeFileSync(path, JSON.stringify({ grid: digest, row: { ...all[0], results, error: null } }));
    expect(readDone(path, all, digest)?.results?.model).toBe(1.3);
    writeFileSync(path, JSON.stringify({ grid: 'another', row: { ...all[0], results, error: null } }));
    expect(readDone(path, all, digest)).toBeNull();
    writeFileSync(path, 'not json');
    expect(readDone(path, all, digest)).toBeNull();
  });
});
