// Run by forecaster.test.ts as `node --expose-gc --max-semi-space-size=1 forecaster-probe.mjs`: a windowed hybrid
// model of three stacked members reading calendar positions forecasts two rows ahead for 50,000 rows given as numbers
// (nextValuesInto), one heat reading in seven missing (NaN: filled and flagged), after a warm-up; the collections
// during those rows are counted (young-generation collections, in the steady state: tests/helpers/collections.mjs),
// then again while each row also makes one small object (the control: it shows the count sees an allocation of that
// size).
import { buildModel } from '@weft/cells';
import { stackMembers } from '@weft/cells/internal';
import { createRowForecaster, createSeriesForecasters, modelTensors, writeWeightFile } from '@weft/io';
import { createRuntime } from '@weft/io/runtime';
import { collectionsDuring } from '../../../tests/helpers/collections.mjs';

// With the argument "many": three series of one model taking turns row by row, each with its own 0/1 input.
const many = process.argv[2] === 'many';
const member = { input: { kind: 'values', width: many ? 9 : 6 }, layers: [{ cell: 'lstm', hidden: 4 }], readout: { width: 2 } };
const stacked = stackMembers([1, 2, 3].map((seed) => buildModel(member, { seed })));
const smoothing = { method: 'additive', season: 4, alpha: 0.3, beta: 0.1, gamma: 0.2, phi: 1, level: 10, trend: 0.1, seasonal: [1, -1, 0.5, -0.5] };
const meta = {
  task: 'forecast',
  columns: ['heat', 'flow'],
  targetColumns: ['heat'],
  horizon: 2,
  rowsAhead: 'all',
  members: 3,
  timeColumn: 'time',
  normalisation: { mean: [0, 0], deviation: [1, 1] },
  window: { rows: 4, deviation: [1, 1], targetDeviation: [1, 1], hybrid: [smoothing], calendar: ['day of week'] },
  missing: { rule: 'interpolate', gapLimit: 3, flagged: [0], fallback: [10, 0], markers: [] },
};
const runtime = await createRuntime(await writeWeightFile(stacked.description, modelTensors(stacked)));
const { normalisation, window, missing, ...shared } = meta;
const series = ['a', 'b', 'c'].map((id) => ({ id, normalisation, window, missing }));
const forecasters = many
  ? [...createSeriesForecasters(runtime, { ...shared, panel: { idColumn: 'site', idInputs: true, series } }).values()]
  : [createRowForecaster(runtime, meta)];
const row = new Float64Array(3);
const out = new Float64Array(2);
const run = (count, start, extra) => {
  let kept = null;
  for (let i = start; i < start + count; i++) {
    row[0] = i % 7 === 3 ? NaN : 10 + Math.sin(i);
    row[1] = Math.cos(i);
    row[2] = i * 86_400_000;
    forecasters[i % forecasters.length].nextValuesInto(row, out);
    if (extra) kept = { i, heat: row[0] };
  }
  return kept;
};
// 50,000 rows a pass: the control's one small object per row then fills the 1 MB young generation a few times over
// (at 20,000 rows it counted 1 or 2 collections, too close to none).
const ROWS = 50000;
// Each counted pass continues the series where the last one stopped.
let next = 0;
const work = (count, extra) => {
  run(count, next, extra);
  next += count;
};
const { collections, major, rounds, control } = await collectionsDuring(work, ROWS);
console.log(JSON.stringify({ collections, major, rounds, rows: ROWS, control }));
