/** `weft sample`: text from a text model, the same for the same seed, with unknown prefix characters said. */
import { describe, expect, it } from 'vitest';
import { commandFolder, writeNotes } from './command.js';

const { folder, weft } = commandFolder('weft-sample-');
writeNotes(folder);

describe('weft sample', () => {
  it('continues a prefix by the length asked, the same text for the same seed, ending with a newline', () => {
    const trained = weft([
      'train',
      'notes.txt',
      '--cell',
      'gru',
      '--hidden',
      '16',
      '--window',
      '24',
      '--streams',
      '4',
      '--epochs',
      '2',
      '--out',
      'notes.weft.json',
      '--quiet',
    ]);
    expect(trained.code).toBe(0);
    const sample = weft(['sample', 'notes.weft.json', '--prefix', 'day 3: ', '--length', '60', '--seed', '2']);
    expect(sample.code).toBe(0);
    expect(sample.out.startsWith('day 3: ')).toBe(true);
    expect(sample.out.trim().length).toBe(67);
    expect(sample.out.endsWith('\n')).toBe(true);
    expect(weft(['sample', 'notes.weft.json', '--prefix', 'day 3: ', '--length', '60', '--seed', '2']).out).toBe(sample.out);
  });

  it('says on stderr how many prefix characters the model never saw, and shows the prefix as written', () => {
    const unknown = weft(['sample', 'notes.weft.json', '--prefix', 'day Ω: ', '--length', '10', '--seed', '2']);
    expect(unknown.code).toBe(0);
    expect(unknown.err.trim()).toBe("weft: 1 of 7 characters of --prefix are not in the model's vocabulary; the model reads them as <unknown>");
    expect(unknown.out.startsWith('day Ω: ')).toBe(true);
  });
});
