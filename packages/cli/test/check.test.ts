/** `weft check`: the built-in cells, a cell of the user's own that is right, and one with a slip it must catch. */
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { commandFolder, fixtures } from './command.js';

const { weft } = commandFolder('weft-check-');

describe('weft check', () => {
  it('checks the built-in cells, a correct cell of your own, and catches a broken one', () => {
    const builtIn = weft(['check']);
    expect(builtIn.code).toBe(0);
    expect(builtIn.out).toContain('all 10 gradient checks passed');
    const good = weft(['check', '--module', join(fixtures, 'gated-cell.mjs'), '--export', 'makeCell']);
    expect(good.code).toBe(0);
    expect(good.out).toContain('all 1 gradient checks passed');
    const broken = weft(['check', '--module', join(fixtures, 'broken-cell.mjs')]);
    expect(broken.code).toBe(1);
    expect(broken.out).toMatch(/FAIL recurrent \[4, 4\]/);
    expect(broken.out).toContain('GRADIENT CHECK FAILED');
  });

  it('prints only the result line of a passing check under --quiet, and still the report of a failing one', () => {
    const quiet = weft(['check', '--quiet']);
    expect(quiet.code).toBe(0);
    expect(quiet.out).toBe('all 10 gradient checks passed (backend webassembly; finite differences in f64 run on the JavaScript kernels on every backend)\n'.replace('webassembly', process.env.WEFT_BACKEND ?? 'webassembly'));
    const broken = weft(['check', '--quiet', '--module', join(fixtures, 'broken-cell.mjs')]);
    expect(broken.code).toBe(1);
    expect(broken.out).toMatch(/FAIL recurrent \[4, 4\]/);
  });
});
