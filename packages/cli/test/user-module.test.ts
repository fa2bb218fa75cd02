/**
 * A module of the user's own for `weft check --module` (user-module.ts): TypeScript loads through Node's own type
 * stripping where this Node has it and through tsx otherwise (the repository has it as a development dependency), or
 * is refused in one line saying what to get; a class, a value that is not a function or a missing export is a
 * one-line error naming the file and the export.
 */
import { copyFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { commandFolder, expectOneLineError, fixtures } from './command.js';
import { nodeStripsTypes } from '../src/user-module.js';

const { folder, weft } = commandFolder('weft-user-module-');

describe('a module of your own', () => {
  it('checks a cell written in TypeScript, exported by name', () => {
    const result = weft(['check', '--module', join(fixtures, 'gated-cell.ts'), '--export', 'makeCell', '--quiet']);
    expect(result.err).toBe('');
    expect(result.out).toMatch(/^all 1 gradient checks passed/);
  });

  it('says in one line what a TypeScript module needs where this Node cannot strip types and no tsx is beside it', () => {
    // A folder outside the repository, with no tsx to find.
    copyFileSync(join(fixtures, 'gated-cell.ts'), join(folder, 'cell.ts'));
    const result = weft(['check', '--module', join(folder, 'cell.ts'), '--export', 'makeCell', '--quiet']);
    if (nodeStripsTypes()) {
      // Node strips the types itself; the module's imports of @weft/* are not found outside a project, and say so.
      expect(result.code).toBe(1);
      expect(result.err).toMatch(/^weft: .*cell\.ts: could not load the module: Cannot find (package|module) '@weft\/core'/);
    } else {
      expectOneLineError(
        result,
        1,
        /^weft: .*cell\.ts: a TypeScript module needs Node 22\.18 or later \(it strips the types itself; this is Node v\d+\.\d+\.\d+\), or tsx installed beside it \(npm install --save-dev tsx\); or compile it to JavaScript first$/,
      );
    }
  });

  it('refuses a class, a value that is not a function, a missing export and a missing file, naming each', () => {
    expectOneLineError(
      weft(['check', '--module', join(fixtures, 'class-cell.mjs'), '--export', 'GatedCell']),
      1,
      /^weft: .*class-cell\.mjs: export "GatedCell" is a class; export a function \(\{ inputWidth, hidden, dtype \}\) => cell that makes one \(for example \(request\) => new GatedCell\(request\)\)$/,
    );
    expectOneLineError(
      weft(['check', '--module', join(fixtures, 'class-cell.mjs')]),
      1,
      /^weft: .*class-cell\.mjs: no export "default" \(it exports "GatedCell"\); name one with --export$/,
    );
    writeFileSync(join(folder, 'number.mjs'), 'export const makeCell = 42;\n');
    expectOneLineError(
      weft(['check', '--module', join(folder, 'number.mjs'), '--export', 'makeCell']),
      1,
      /^weft: .*number\.mjs: export "makeCell" is number, not a function \(\{ inputWidth, hidden, dtype \}\) => cell$/,
    );
    writeFileSync(join(folder, 'throws.mjs'), 'export default () => { throw new Error("no such size"); };\n');
    expectOneLineError(
      weft(['check', '--module', join(folder, 'throws.mjs')]),
      1,
      /^weft: .*throws\.mjs: export "default" threw when asked for a cell of 3 inputs and 4 hidden in f64: no such size$/,
    );
    expectOneLineError(weft(['check', '--module', join(folder, 'missing.ts')]), 1, /^weft: .*missing\.ts: no such file$/);
  });
});
