/** `weft inspect`: what a weight file holds, in a form a person can read. */
import { loadWeightFile } from '@weft/io/node';
import type { FlagSpec, ParsedArgs } from './args.js';
import { CommandError } from './errors.js';
import { cellModuleFlags, cellPlansFrom } from './cell-module.js';
import { shown } from './terminal.js';
import { importSummary, isWeightFileText, readBytes } from './convert.js';
import { WeftError, describeProblem } from '@weft/core';
import { decodeOnnxModel, importOnnx } from '@weft/io/onnx';
import { layoutProblems } from '@weft/io/internal';
import { parameterLayout } from '@weft/cells';

export const inspectFlags: FlagSpec[] = [
  ...cellModuleFlags,
  { name: 'json', switch: true, description: 'print the summary as JSON' },
  { name: 'debug', switch: true, description: 'show stack traces' },
];

const bytesPer = { f32: 4, f16: 2, i8: 1 } as const;

export async function inspect(args: ParsedArgs): Promise<string> {
  const [path] = args.positional;
  if (path === undefined) throw new CommandError('weft inspect needs a weight file (see weft inspect --help)', 2);
  const bytes = readBytes(path);
  if (!isWeightFileText(bytes, path)) return inspectOnnx(path, bytes);
  const plans = await cellPlansFrom(args);
  const file = await loadWeightFile(path, { verifyDigest: 'report', plans });
  const rows = file.tensors.map((t) => {
    const dtype = file.storedAs[t.name];
    const rowsCount = t.shape.length === 0 ? 1 : t.values.length / Math.max(1, t.shape[t.shape.length - 1]);
    const bytes = t.values.length * bytesPer[dtype] + (dtype === 'i8' ? rowsCount * 4 : 0);
    return { name: shown(t.name), shape: `[${t.shape.join(', ')}]`, dtype, bytes, elements: t.values.length };
  });
  const parameters = rows.reduce((n, r) => n + r.elements, 0);
  // The loss history a checkpoint carries is for resuming the loss curve, not for reading here.
  const metadata = Object.entries(file.metadata).filter(([key]) => key !== 'history');
  if (args.switches.has('json')) {
    return JSON.stringify(
      {
        model: file.model,
        tensors: rows,
        parameters,
        metadata: Object.fromEntries(metadata),
        digest: { hex: file.digest, verified: file.digestVerified },
        checkpoint: file.training !== undefined,
      },
      null,
      2,
    );
  }
  const lines: string[] = [];
  lines.push(`${shown(path)}: weft weight file, version ${file.version}${file.training !== undefined ? ' (a checkpoint: carries training state)' : ''}`);
  lines.push(
    '',
    'model:',
    ...JSON.stringify(file.model, null, 2)
      .split('\n')
      .map((l) => `  ${shown(l)}`),
  );
  const widths = [
    Math.max(6, ...rows.map((r) => r.name.length)),
    Math.max(5, ...rows.map((r) => r.shape.length)),
    5,
    Math.max(5, ...rows.map((r) => String(r.bytes).length)),
  ];
  lines.push('', 'tensors:');
  lines.push(`  ${'name'.padEnd(widths[0])}  ${'shape'.padEnd(widths[1])}  ${'dtype'.padEnd(widths[2])}  ${'bytes'.padStart(widths[3])}`);
  for (const r of rows)
    lines.push(`  ${r.name.padEnd(widths[0])}  ${r.shape.padEnd(widths[1])}  ${r.dtype.padEnd(widths[2])}  ${String(r.bytes).padStart(widths[3])}`);
  lines.push(`  ${parameters} parameters, ${rows.reduce((n, r) => n + r.bytes, 0)} bytes of tensor data`);
  lines.push('', 'metadata:');
  for (const [key, value] of metadata) {
    let text = JSON.stringify(value) ?? String(value);
    if (Array.isArray(value) && text.length > 100) text = `${value.length} entries: ${JSON.stringify(value.slice(0, 12)).slice(0, -1)}, …]`;
    lines.push(`  ${shown(key)}: ${shown(text)}`);
  }
  lines.push('', `digest: SHA-256 ${file.digest} — ${file.digestVerified ? 'verified' : 'DOES NOT MATCH the tensor bytes (the file was changed or damaged)'}`);
  // The tensors against the description's layout, as weft run checks them (built-in cells; a cell of your own
  // defines its own tensors).
  const layout = parameterLayout(file.model, plans);
  const problems = layout.builtIn
    ? layoutProblems(
        file.tensors.map((t) => ({ name: t.name, shape: t.shape })),
        layout.parameters,
      )
    : [];
  if (problems.length > 0) {
    process.stdout.write(`${lines.join('\n')}\n`);
    throw new CommandError(
      `${shown(path)}: weft run refuses this file, its tensors disagree with its description: ${problems.map(describeProblem).join('; ')}`,
      1,
    );
  }
  if (!file.digestVerified) {
    // The report still goes where reports go; the failure is one line on standard error and exit 1.
    process.stdout.write(`${lines.join('\n')}\n`);
    throw new CommandError(`${shown(path)}: the SHA-256 digest does not match the tensor bytes (the file was changed or damaged)`, 1);
  }
  return lines.join('\n');
}

/** What an ONNX file holds (its nodes, inputs, outputs and constants), and what importing it gives, or why not. */
function inspectOnnx(path: string, bytes: Uint8Array): string {
  const model = decodeOnnxModel(bytes, path);
  const g = model.graph;
  const dims = (d: readonly (number | string | null)[] | null) => (d === null ? '[?]' : `[${d.map((x) => (x === null ? '?' : String(x))).join(', ')}]`);
  const lines = [
    `${shown(path)}: ONNX model, IR version ${model.irVersion}, operator sets ${model.opsets.map((o) => `${o.domain === '' ? 'ai.onnx' : shown(o.domain)} ${o.version}`).join(', ')}${model.producerName === '' ? '' : `, written by ${shown(model.producerName)}${model.producerVersion === '' ? '' : ` ${shown(model.producerVersion)}`}`}`,
  ];
  lines.push(
    '',
    'inputs:',
    ...g.inputs.map((i) => `  ${shown(i.name)} ${dims(i.dims)}${g.initializers.some((t) => t.name === i.name) ? ' (has an initializer)' : ''}`),
  );
  lines.push('', 'outputs:', ...g.outputs.map((o) => `  ${shown(o.name)} ${dims(o.dims)}`));
  lines.push('', 'nodes:');
  g.nodes.forEach((n, i) => {
    const attributes = n.attributes
      .map((a) => `${shown(a.name)}=${shown(JSON.stringify(a.i ?? a.f ?? a.s ?? a.ints ?? a.floats ?? a.strings ?? '…'))}`)
      .join(' ');
    lines.push(
      `  ${String(i).padStart(3)} ${shown(n.opType).padEnd(10)} ${n.inputs.map((x) => (x === '' ? '-' : shown(x))).join(', ')} → ${n.outputs.map((x) => (x === '' ? '-' : shown(x))).join(', ')}${attributes === '' ? '' : `  (${attributes})`}`,
    );
  });
  const parameters = g.initializers.reduce((n, t) => n + t.values.length, 0);
  lines.push('', `constants: ${g.initializers.length} tensors, ${parameters} values`);
  const metadata = Object.keys(model.metadata);
  if (metadata.length > 0) lines.push(`metadata: ${metadata.map((key) => shown(key)).join(', ')}`);
  try {
    lines.push('', `import: ${importSummary(importOnnx(model))}`);
  } catch (error) {
    if (!(error instanceof WeftError)) throw error;
    lines.push('', `import: not possible as it is: ${shown(describeProblem(error.problems[0]))}`);
  }
  return lines.join('\n');
}
