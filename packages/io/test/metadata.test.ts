/**
 * Metadata that contradicts its model is refused, every problem at once, before a command prints "undefined" or
 * divides by a zero deviation: the cases a hostile or unlucky file showed, each named by its metadata path.
 */
import { describe, expect, it } from 'vitest';
import { buildModel } from '@weft/cells';
import { checkMetadata, loadModel, modelTensors, readWeightFile, writeWeightFile } from '@weft/io';

const forecaster = { input: { kind: 'values' as const, width: 2 }, layers: [{ cell: 'gru' as const, hidden: 3 }], readout: { width: 1 } };
const textModel = { input: { kind: 'embedding' as const, vocabulary: 4, width: 2 }, layers: [{ cell: 'lstm' as const, hidden: 3 }], readout: { width: 4 } };

async function fileOf(model: typeof forecaster | typeof textModel, metadata: Record<string, unknown>) {
  const text = await writeWeightFile(model, modelTensors(buildModel(model, { seed: 1 })), { metadata });
  return readWeightFile(text.replace('"__DEVIATION__"', '1e999'));
}

const goodForecast = { task: 'forecast', columns: ['a', 'b'], targetColumns: ['a'], horizon: 2, normalisation: { mean: [0, 1], deviation: [1, 2] } };

describe('metadata against its model', () => {
  it('accepts what training writes', async () => {
    const forecast = await fileOf(forecaster, goodForecast);
    const text = await fileOf(textModel, { task: 'next-token', vocabulary: ['a', 'b', 'c', 'd'] });
    expect(() => checkMetadata(forecast)).not.toThrow();
    expect(() => checkMetadata(text)).not.toThrow();
  });

  it('refuses a zero and an infinite deviation, columns not an array, and targets outside the columns', async () => {
    const file = await fileOf(forecaster, {
      ...goodForecast,
      columns: 'a,b',
      targetColumns: ['z'],
      normalisation: { mean: [0, 1], deviation: [0, '__DEVIATION__'] },
    });
    expect(() => checkMetadata(file)).toThrowError(
      '2 problems:\n  - Bad weight file at metadata.columns: expected an array of column names, received "a,b"\n' +
        '  - Bad weight file at metadata.normalisation.deviation[0]: expected a finite number > 0, received 0',
    );
    const infinite = await fileOf(forecaster, { ...goodForecast, normalisation: { mean: [0, 1], deviation: [1, '__DEVIATION__'] } });
    expect(() => checkMetadata(infinite)).toThrowError('Bad weight file at metadata.normalisation.deviation[1]: expected a finite number > 0, received null');
    const stray = await fileOf(forecaster, { ...goodForecast, targetColumns: ['z'] });
    expect(() => checkMetadata(stray)).toThrowError('Bad weight file at metadata.targetColumns: expected names among metadata.columns, received "z"');
  });

  it('refuses fewer classes than outputs, a shorter vocabulary, a missing normalisation, and a forecast file that claims to be a text model', async () => {
    const classes = await fileOf(textModel, { task: 'classification', classes: ['only'] });
    expect(() => checkMetadata(classes)).toThrowError('Bad weight file at metadata.classes: expected 4 class names (one per output of the model), received 1');
    const vocabulary = await fileOf(textModel, { task: 'next-token', vocabulary: ['a', 'b'] });
    expect(() => checkMetadata(vocabulary)).toThrowError("Bad weight file at metadata.vocabulary: expected 4 tokens (the embedding's vocabulary), received 2");
    const { normalisation: _dropped, ...missing } = goodForecast;
    const withoutNormalisation = await fileOf(forecaster, missing);
    expect(() => checkMetadata(withoutNormalisation)).toThrowError(
      'Bad weight file at metadata.normalisation: expected a normalisation entry (a forecast model needs it), received nothing',
    );
    const claims = await fileOf(forecaster, { task: 'next-token', vocabulary: ['a'] });
    expect(() => checkMetadata(claims)).toThrowError(
      'Bad weight file at metadata.task: expected a task for a model over numbers (next-token reads tokens), received "next-token"',
    );
    // loadModel checks it too, before building anything.
    expect(() => loadModel(classes)).toThrowError(/metadata\.classes/);
  });

  it("checks each series of a model of many as one series, naming the series' own field", async () => {
    // Two columns and a 0/1 input per series of two: four inputs.
    const wide = { ...forecaster, input: { kind: 'values' as const, width: 4 } };
    const own = { normalisation: { mean: [0, 1], deviation: [1, 2] } };
    const panel = {
      idColumn: 'site',
      idInputs: true,
      series: [
        { id: 'north', ...own },
        { id: 'south', normalisation: { mean: [0, 1], deviation: [1, 0] } },
      ],
    };
    const { normalisation: _unused, ...shared } = goodForecast;
    const file = await fileOf(wide as unknown as typeof forecaster, { ...shared, panel });
    expect(() => checkMetadata(file)).toThrowError(
      'Bad weight file at metadata.panel.series[1].normalisation.deviation[1]: expected a finite number > 0, received 0',
    );
    const good = await fileOf(wide as unknown as typeof forecaster, { ...shared, panel: { ...panel, series: [panel.series[0], { id: 'south', ...own }] } });
    expect(() => checkMetadata(good)).not.toThrow();
  });
});
