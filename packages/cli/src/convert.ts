/**
 * `weft convert FILE`: between ONNX and weft. An `.onnx` file becomes a weight file (weights given as graph inputs,
 * as in ONNX's own operator test models, come from TensorProto files named with `--values`); a weight file becomes an
 * ONNX model (operator set 22). Which way is read from the file's content: a weight file is JSON text.
 */
import { closeSync, openSync, readFileSync, readSync, statSync } from 'node:fs';
import { basename } from 'node:path';
import { checkMetadata, readWeightFile } from '@weft/io';
import { isEncoderDecoder } from '@weft/cells';
import { writeFileAtomic } from '@weft/io/node';
import { ONNX_OPSET, decodeOnnxModel, decodeOnnxTensor, encodeOnnxModel, exportOnnx, importOnnx, importedWeightFile } from '@weft/io/onnx';
import type { OnnxImport, OnnxTensor } from '@weft/io/onnx';
import type { FlagSpec, ParsedArgs } from './args.js';
import { CommandError } from './errors.js';
import { cellModuleFlags, cellPlansFrom } from './cell-module.js';
import { shown } from './terminal.js';

export const convertFlags: FlagSpec[] = [
  ...cellModuleFlags,
  { name: 'out', value: 'FILE', description: 'where the converted file goes', fallback: '<name>.weft.json from ONNX, <name>.onnx from weft' },
  { name: 'values', value: 'NAME=FILE,…', description: 'ONNX only: values of graph inputs that are weights, as TensorProto files' },
  { name: 'lengths', switch: true, description: 'to ONNX only: add a lengths input [batch] for ragged batches' },
  { name: 'debug', switch: true, description: 'show stack traces' },
];

/** Reads a file whole, naming it when it is missing. */
/**
 * The largest ONNX file `weft convert` and `weft inspect` read, checked before reading (decoding takes several times
 * a file's size; weight files have the reader's own limits, docs/weight-format.md).
 */
export const MAX_ONNX_BYTES = 64 * 1024 * 1024;

/** A file's bytes; an ONNX file (not a weight file, by its name or first byte) past MAX_ONNX_BYTES is refused unread. */
export function readBytes(path: string): Uint8Array {
  try {
    const size = statSync(path).size;
    if (size > MAX_ONNX_BYTES) {
      const head = new Uint8Array(64);
      const handle = openSync(path, 'r');
      try {
        readSync(handle, head, 0, head.length, 0);
      } finally {
        closeSync(handle);
      }
      if (!isWeightFileText(head, path))
        throw new CommandError(`${shown(path)}: ${(size / 1048576).toFixed(1)} MB; weft reads ONNX files of at most ${MAX_ONNX_BYTES / 1048576} MB`);
    }
    return readFileSync(path);
  } catch (error) {
    if (error instanceof CommandError) throw error;
    const code = (error as NodeJS.ErrnoException).code;
    throw new CommandError(`${shown(path)}: ${code === 'ENOENT' ? 'no such file' : (error as Error).message}`);
  }
}

/**
 * True when the file is a weight file (JSON text) rather than an ONNX file (protobuf): by its name's ending where it
 * has one of the two, else by its first character (a protobuf file never starts with `{` or `[`).
 */
export function isWeightFileText(bytes: Uint8Array, path = ''): boolean {
  if (/\.onnx$/i.test(path)) return false;
  if (/\.json$/i.test(path)) return true;
  for (const byte of bytes) {
    if (byte === 0x20 || byte === 0x0a || byte === 0x0d || byte === 0x09 || byte === 0xef || byte === 0xbb || byte === 0xbf) continue;
    return byte === 0x7b || byte === 0x5b;
  }
  return false;
}

/** The `--values` flag: graph input names and the TensorProto files that hold their values. */
function givenValues(args: ParsedArgs): Record<string, OnnxTensor> {
  const values: Record<string, OnnxTensor> = {};
  for (const pair of (args.flags.get('values') ?? '')
    .split(',')
    .map((s) => s.trim())
    .filter((s) => s !== '')) {
    const at = pair.indexOf('=');
    if (at <= 0) throw new CommandError(`--values takes NAME=FILE pairs separated by commas; got ${JSON.stringify(pair)}`, 2);
    values[pair.slice(0, at)] = decodeOnnxTensor(readBytes(pair.slice(at + 1)), pair.slice(at + 1));
  }
  return values;
}

/** One line describing an imported model: its layers and what it reads and gives. */
export function importSummary(imported: OnnxImport): string {
  const d = imported.description;
  const layers = d.layers
    .map((l) => `${l.cell === 'plain' ? `plain ${l.activation ?? 'tanh'}` : l.cell.toUpperCase()} ${l.hidden}${l.bidirectional === true ? ' both ways' : ''}`)
    .join(', then ');
  const input = d.input.kind === 'embedding' ? `token ids (${d.input.vocabulary} tokens, embedding ${d.input.width})` : `${d.input.width} values per step`;
  const readout = d.readout === undefined || d.readout === null ? '' : `, readout to ${d.readout.width}`;
  return `${layers}${readout}; reads ${input} from "${imported.binding.input.name}" (layout ${imported.binding.layout})`;
}

export async function convert(args: ParsedArgs): Promise<string> {
  const [path] = args.positional;
  if (path === undefined) throw new CommandError('weft convert needs a file: an .onnx model or a weight file (see weft convert --help)', 2);
  const bytes = readBytes(path);
  const name = basename(path);
  if (isWeightFileText(bytes, path)) {
    if (args.flags.has('values')) throw new CommandError('--values is for ONNX files; this is a weight file', 2);
    const plans = await cellPlansFrom(args);
    const file = await readWeightFile(new TextDecoder().decode(bytes), { plans });
    if (isEncoderDecoder(file.model))
      throw new CommandError(`${shown(name)}: an encoder-decoder; weft converts sequence models (one chain of layers) to ONNX, not encoder-decoders`);
    const onnx = exportOnnx(file, { lengths: args.switches.has('lengths'), plans });
    const out = args.flags.get('out') ?? `${path.replace(/(\.weft)?\.json$/i, '')}.onnx`;
    const encoded = encodeOnnxModel(onnx);
    writeFileAtomic(out, encoded);
    return `${shown(name)} → ${shown(out)}: ONNX operator set ${ONNX_OPSET}, ${onnx.graph.nodes.length} nodes (${onnx.graph.nodes.map((n) => n.opType).join(', ')}), ${encoded.length} bytes; inputs ${onnx.graph.inputs.map((i) => i.name).join(', ')}, output ${onnx.graph.outputs[0].name}`;
  }
  if (args.switches.has('lengths')) throw new CommandError('--lengths is for weight files; this is an ONNX file', 2);
  const values = givenValues(args);
  const imported = importOnnx(decodeOnnxModel(bytes, name), { values });
  const out = args.flags.get('out') ?? `${path.replace(/\.onnx$/i, '')}.weft.json`;
  const text = await importedWeightFile(imported);
  // Checked with the reader weft run uses (the file and its metadata against the model) before anything is written:
  // a model's metadata the ONNX file carried (say a horizon of -3) must not make a file weft then refuses.
  try {
    checkMetadata(await readWeightFile(text));
  } catch (error) {
    throw new CommandError(`${shown(name)}: the weight file it would become is not one weft can run (nothing written): ${(error as Error).message}`);
  }
  writeFileAtomic(out, text);
  const count = imported.tensors.reduce((n, t) => n + t.values.length, 0);
  return `${shown(name)} → ${shown(out)}: ${importSummary(imported)}; ${count} parameters`;
}
