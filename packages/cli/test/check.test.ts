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
    expect(quiet.out).toBe(
      'all 10 gradient checks passed (backend webassembly; finite differences in f64 run on the JavaScript kernels on every backend)\n'.replace(
        'webassembly',
        process.env.WEFT_BACKEND ?? 'webassembly',
      ),
    );
    const broken = weft(['check', '--quiet', '--module', join(fixtures, 'broken-cell.mjs')]);
    expect(broken.code).toBe(1);
    expect(broken.out).toMatch(/FAIL recurrent \[4, 4\]/);
  });
});

describe('the gradient check of the built-in cells at larger sizes, and of deliberate bugs', () => {
  // Imported here so the command's subprocess tests above stay independent of the library's state.
  const cells = async () => {
    const { GruCell, LstmCell, PlainCell } = await import('@weft/cells');
    const base = (hidden: number) => ({ inputWidth: 3, hidden, dtype: 'f64' as const });
    return (hidden: number) =>
      [
        ['LSTM', new LstmCell({ ...base(hidden), random: 1 })],
        ['LSTM with peepholes', new LstmCell({ ...base(hidden), random: 2, peepholes: true })],
        ['GRU', new GruCell({ ...base(hidden), random: 3 })],
        ['GRU, reset after', new GruCell({ ...base(hidden), random: 4, resetAfterProduct: true })],
        ['plain', new PlainCell({ ...base(hidden), random: 5 })],
      ] as const;
  };

  it('passes every built-in cell at H ∈ {8, 32, 64} and T ∈ {5, 20, 50} in f64, saying which entries needed which rule', async () => {
    const { checkCell } = await import('../src/check.js');
    const make = await cells();
    for (const hidden of [8, 32, 64]) {
      for (const steps of [5, 20, 50]) {
        // Every entry at the smallest size; 40 drawn per tensor above it (the whole grid would take minutes).
        const entries = hidden === 8 && steps === 5 ? {} : { entriesPerTensor: 40 };
        for (const [name, cell] of make(hidden)) {
          const report = checkCell(cell, { steps, seed: `${name} ${hidden} ${steps}`, ...entries });
          const rules = report.tensors.reduce(
            (n, t) => [n[0] + t.passedByNoise.length, n[1] + t.passedByExtrapolation.length, n[2] + t.passedByFloor.length],
            [0, 0, 0],
          );
          if (rules.some((n) => n > 0))
            console.log(
              `${name}, H ${hidden}, T ${steps}: ${rules[0]} entries within the rounding noise, ${rules[1]} once extrapolated, ${rules[2]} by the floor`,
            );
          expect(report.passed, `${name}, H ${hidden}, T ${steps}:\n${report.text()}`).toBe(true);
        }
      }
    }
  }, 300_000);

  it('fails each cell whose backward kernel is off by a tenth of a percent, naming the tensors', async () => {
    const { checkCell } = await import('../src/check.js');
    const { javascriptBackend } = await import('@weft/core');
    const make = await cells();
    // Test-only mutations: one gradient the kernel writes (a field of its output record), scaled by 1.001 after it runs.
    const writes: Record<string, string> = { lstmStepBackward: 'gates', gruBackwardCandidate: 'updateReset', plainStepBackward: 'pre' };
    const skewed = (kernel: string) => {
      const original = (javascriptBackend.kernels as unknown as Record<string, (...args: unknown[]) => void>)[kernel];
      const wrong = (...args: unknown[]) => {
        original(...args);
        const written = (args[0] as Record<string, Float64Array>)[writes[kernel]];
        for (let i = 0; i < written.length; i++) written[i] *= 1.001;
      };
      return { ...javascriptBackend, kernels: { ...javascriptBackend.kernels, [kernel]: wrong } };
    };
    const kernelOf: Record<string, string> = {
      LSTM: 'lstmStepBackward',
      'LSTM with peepholes': 'lstmStepBackward',
      GRU: 'gruBackwardCandidate',
      'GRU, reset after': 'gruBackwardCandidate',
      plain: 'plainStepBackward',
    };
    for (const [name, cell] of make(8)) {
      const report = checkCell(cell, { steps: 5, seed: name, backend: skewed(kernelOf[name]) });
      expect(report.passed, name).toBe(false);
      const failing = report.tensors.filter((t) => !t.passed).map((t) => t.name);
      expect(failing, name).toEqual(expect.arrayContaining(['recurrent']));
      expect(report.text()).toMatch(/FAIL recurrent \[8, \d+\]: .* failed$/m);
      // The same cell on the real kernels passes.
      expect(checkCell(cell, { steps: 5, seed: name }).passed, name).toBe(true);
    }
  }, 120_000);

  it('prints every failing entry with both values under --report table, and takes --step, --floor, --entries and --seed', () => {
    const broken = weft([
      'check',
      '--module',
      join(fixtures, 'broken-cell.mjs'),
      '--report',
      'table',
      '--entries',
      '8',
      '--seed',
      's',
      '--step',
      '1e-5',
      '--floor',
      '1e-9',
    ]);
    expect(broken.code).toBe(1);
    expect(broken.out).toMatch(/^failing entries \(at most 100 per tensor, the worst first\):$/m);
    expect(broken.out).toMatch(/^ {2}recurrent\[\d+, \d+\] {2}reverse -?[\d.e-]+ {2}finite difference -?[\d.e-]+ {2}relative error [\d.e+-]+$/m);
    expect(broken.out).toMatch(/FAIL recurrent \[4, 4\]: 8 entries/);
  });
});
