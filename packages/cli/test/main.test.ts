/**
 * The command's front door (main.ts): --version, --help on every verb, the flag reader's rules, and one-line errors
 * with a non-zero exit for whatever cannot be done, the stack trace only with --debug.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { buildModel } from '@weft/cells';
import { modelTensors, writeWeightFile } from '@weft/io';
import { commandFolder, expectOneLineError, writeNotes } from './command.js';

const { folder, weft } = commandFolder('weft-main-');
writeNotes(folder);

describe('the weft command', () => {
  it('answers --version and --help on every verb, with an example line', () => {
    const version = weft(['--version']);
    expect(version.code).toBe(0);
    expect(version.out.trim()).toMatch(/^\d+\.\d+\.\d+$/);
    for (const verb of ['train', 'run', 'sample', 'inspect', 'score', 'convert', 'sweep', 'check']) {
      const help = weft([verb, '--help']);
      expect(help.code).toBe(0);
      expect(help.out).toContain(`usage: weft ${verb}`);
      expect(help.out).toMatch(/example:\n {2}weft /);
    }
  });

  it('ends the flags at --, so a file whose name starts with dashes can be named', async () => {
    const model = buildModel({ input: { kind: 'values', width: 2 }, layers: [{ cell: 'gru', hidden: 3 }], readout: { width: 1 } }, { seed: 1 });
    writeFileSync(join(folder, '--odd.weft.json'), await writeWeightFile(model.description, modelTensors(model)));
    expect(readFileSync(join(folder, '--odd.weft.json'), 'utf8')).toContain('"format"');
    const inspect = weft(['inspect', '--', '--odd.weft.json']);
    expect(inspect.code).toBe(0);
    expect(inspect.out).toMatch(/digest: SHA-256 [0-9a-f]{64} — verified/);
    // After --, even --help is a file name.
    expectOneLineError(weft(['inspect', '--', '--help']), 1, /--help/);
  });

  it('refuses a flag given twice instead of keeping one silently', () => {
    expectOneLineError(weft(['train', 'notes.txt', '--epochs', '1', '--epochs=2']), 2, /^weft: flag --epochs of weft train is given twice; give it once$/);
  });

  describe('malformed input gets one line on stderr and a non-zero exit', () => {
    it('a missing file', () => {
      expectOneLineError(weft(['train', 'nowhere.csv']), 1, /^weft: nowhere\.csv: no such file$/);
    });

    it('an unknown flag', () => {
      expectOneLineError(weft(['train', 'notes.txt', '--hiden', '8']), 2, /^weft: unknown flag --hiden for weft train \(see weft train --help\)$/);
    });

    it('a damaged weight file, every problem on the one line', () => {
      writeFileSync(join(folder, 'damaged.json'), '{"format":"weft-weights","version":1}');
      expectOneLineError(
        weft(['inspect', 'damaged.json']),
        1,
        /^weft: 3 problems: Bad weight file at damaged\.json: model: .*; Bad weight file at damaged\.json: digest: .*; Bad weight file at damaged\.json: tensors: expected an array, received undefined$/,
      );
      writeFileSync(join(folder, 'not-json.json'), 'hello\nworld\n');
      expectOneLineError(weft(['run', 'not-json.json', '-']), 1, /^weft: Bad weight file at not-json\.json: \(file\): expected valid JSON, received .*$/);
    });

    it('shows the stack trace only with --debug', () => {
      const result = weft(['train', 'nowhere.csv', '--debug']);
      expect(result.code).toBe(1);
      expect(result.err).toMatch(/\n\s+at /);
    });
  });
});
