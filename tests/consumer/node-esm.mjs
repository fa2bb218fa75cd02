// The Node side of the installed-packages test: every entry imported from an ES module, a tiny run through them
// (train.mjs), the weight file saved atomically through @weft/io/node and loaded back. Prints one JSON line.
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { loadWeightFile, saveWeightFile } from '@weft/io/node';
import { buildModel } from '@weft/cells';
import { trainAndForecast } from './train.mjs';

const result = await trainAndForecast();
const folder = mkdtempSync(join(tmpdir(), 'weft-consumer-'));
const path = join(folder, 'small.weft.json');
const model = buildModel({ input: { kind: 'values', width: 1 }, layers: [{ cell: 'lstm', hidden: 4 }], readout: { width: 1 } }, { seed: 9 });
await saveWeightFile(path, model);
const loaded = await loadWeightFile(path);
const { text, ...rest } = result;
process.stdout.write(
  `${JSON.stringify({ ...rest, textLength: text.length, saved: readFileSync(path, 'utf8').length, savedVerified: loaded.digestVerified, text })}\n`,
);
