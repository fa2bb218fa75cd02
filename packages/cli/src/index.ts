/** @weft/cli as a library: the command's entry and its verbs, for programs and tests that drive them directly. */
export { main } from './main.js';
export { train } from './train.js';
export type { TrainOutcome } from './train.js';
export { parseArgs } from './args.js';
export { reportLines, verdict } from '@weft/io';
export { CommandError } from './errors.js';
export { lossCurveSvg, sparkline } from './plot.js';
export { attentionMapSvg } from './attention-map.js';
