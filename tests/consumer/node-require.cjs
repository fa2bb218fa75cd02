// CommonJS consumers: every entry through require(), which Node (from 20.19) answers with the ES module itself,
// so a CommonJS program and an ES module share one copy of each package (one WeftError, one default backend).
const entries = ['@weft/core', '@weft/core/kernels', '@weft/core/forward', '@weft/core/forward/javascript', '@weft/core/base', '@weft/cells', '@weft/cells/kernels',
  '@weft/cells/description', '@weft/optim', '@weft/io', '@weft/io/runtime', '@weft/io/runtime/javascript', '@weft/io/runtime/encoder-decoder', '@weft/io/translate', '@weft/io/onnx', '@weft/io/node', '@weft/optim/node', '@weft/cli'];
const loaded = Object.fromEntries(entries.map((name) => [name, Object.keys(require(name)).length]));
const { WeftError, Random } = require('@weft/core');
const { buildModel } = require('@weft/cells');
let sameErrorType = false;
try {
  buildModel({ input: { kind: 'values', width: 0 }, layers: [], readout: { width: 1 } });
} catch (error) {
  sameErrorType = error instanceof WeftError;
}
import('@weft/core').then((esm) => {
  process.stdout.write(JSON.stringify({ loaded, sameErrorType, sameModule: esm.WeftError === WeftError, draw: new Random(1).uniform() }) + '\n');
});
