#!/usr/bin/env node
// Compiles the WebAssembly SIMD kernels (packages/core/wasm/*.ts, AssemblyScript) and writes their bytes, in
// base64, into TypeScript modules the library imports (packages/core/src/backend/wasm-*.generated.ts), so Node
// and the browser load the same bytes with no file access. The generated files are build output: git ignores
// them, and no .wasm file is ever written. Run by `npm run build` and `npm test` before tsc.
import { readdirSync, readFileSync, renameSync, statSync, writeFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import asc from 'assemblyscript/asc';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const sourceFolder = join(root, 'packages/core/wasm');
const outputFolder = join(root, 'packages/core/src/backend');
/**
 * Lane loops, written once in the sources as
 *     for (let j = 0; j < n; ) {
 *       const full = j + 4 <= n;
 *       …body…
 *       j += full ? 4 : 1;
 *     }
 * become a vector loop with `full` constant true (so load4/store4 fold to plain vector loads and stores) and a
 * scalar tail with `full` false, whose transcendentals are calls (sigmoidCall4, tanhCall4) to keep the module
 * small. In steps.ts (the gate arithmetic, bound by chains of dependent operations) the vector loop first runs two
 * vectors per turn. The agreement tests check the expanded kernels against their JavaScript twins.
 */
const laneLoop =
  /(?<indent>[ ]*)for \(let (?<v>\w+) = 0; \k<v> < (?<n>[\w ]+); \) \{\n\k<indent> {2}const full = \k<v> \+ 4 <= \k<n>;\n(?<body>[\s\S]*?)\n\k<indent> {2}\k<v> \+= full \? 4 : 1;\n\k<indent>\}/g;

function expandLaneLoops(text, twoPerTurn) {
  return text.replace(laneLoop, (...match) => {
    const { indent, v, n, body } = match[match.length - 1];
    const nested = (block) =>
      block
        .split('\n')
        .map((line) => (line === '' ? line : `  ${line}`))
        .join('\n');
    const tail = body.replaceAll('sigmoid4(', 'sigmoidCall4(').replaceAll('tanh4(', 'tanhCall4(');
    let out = `${indent}let ${v} = 0;\n`;
    if (twoPerTurn) {
      const second = body.replace(new RegExp(`\\b${v}\\b`, 'g'), `${v}Next`);
      out +=
        `${indent}for (; ${v} + 8 <= ${n}; ${v} += 8) {\n${indent}  {\n${indent}    const full = true;\n${nested(body)}\n${indent}  }\n` +
        `${indent}  {\n${indent}    const full = true;\n${indent}    const ${v}Next = ${v} + 4;\n${nested(second)}\n${indent}  }\n${indent}}\n`;
    }
    out += `${indent}for (; ${v} + 4 <= ${n}; ${v} += 4) {\n${indent}  const full = true;\n${body}\n${indent}}\n`;
    out += `${indent}for (; ${v} < ${n}; ${v}++) {\n${indent}  const full = false;\n${tail}\n${indent}}`;
    return out;
  });
}

const sources = Object.fromEntries(
  readdirSync(sourceFolder)
    .filter((name) => name.endsWith('.ts'))
    .map((name) => [name, readFileSync(join(sourceFolder, name), 'utf8')]),
);
const newestSource = Math.max(
  ...Object.keys(sources).map((name) => statSync(join(sourceFolder, name)).mtimeMs),
  statSync(fileURLToPath(import.meta.url)).mtimeMs,
);

/**
 * The relaxed kernel set: the same sources with math.ts's multiply-add made one relaxed_madd (WebAssembly relaxed
 * SIMD), which the engine may fuse into one instruction with one rounding.
 */
const standardMadd = 'return f32x4.add(c, f32x4.mul(a, b));';
const relaxedMadd = 'return f32x4.relaxed_madd(a, b, c);';

const modules = [
  { entry: 'training.ts', output: 'wasm-training.generated.ts', name: 'trainingModuleBase64', what: 'every kernel of the WebAssembly backend' },
  {
    entry: 'training.ts',
    output: 'wasm-training-relaxed.generated.ts',
    name: 'trainingRelaxedModuleBase64',
    what: 'every kernel of the WebAssembly backend, the relaxed set (fused multiply-adds where the engine has them)',
    relaxed: true,
  },
  { entry: 'runtime.ts', output: 'wasm-runtime.generated.ts', name: 'runtimeModuleBase64', what: 'the forward kernels the inference runtime needs' },
];

/** The sections of a module's bytes: id and size (WebAssembly core specification §5.5.2). */
function sectionsOf(bytes) {
  const sections = [];
  let i = 8;
  while (i < bytes.length) {
    const id = bytes[i++];
    let size = 0;
    let shift = 0;
    let byte;
    do {
      byte = bytes[i++];
      size += (byte & 127) * 2 ** shift;
      shift += 7;
    } while (byte & 128);
    sections.push({ id, size });
    i += size;
  }
  return sections;
}

/** Each entry's exports, by entry file. */
const exportsOf = new Map();

for (const module of modules) {
  const target = join(outputFolder, module.output);
  let fresh = false;
  try {
    fresh = statSync(target).mtimeMs > newestSource;
  } catch {
    fresh = false;
  }
  if (fresh) {
    // Its export list, for a relaxed twin built after it (see below).
    const listed = /Exports = (\[.*\]) as const;/.exec(readFileSync(target, 'utf8'));
    if (listed !== null && module.relaxed !== true) exportsOf.set(module.entry, JSON.parse(listed[1]));
    continue;
  }
  // Only the entry is an entry file: the other sources are read when it imports them, so each module exports
  // just what its entry names.
  let bytes = null;
  const errors = [];
  const { error } = await asc.main(
    [
      join(sourceFolder, module.entry),
      '--outFile',
      'module.wasm',
      '-O3',
      '--runtime',
      'stub',
      '--enable',
      module.relaxed === true ? 'simd,relaxed-simd' : 'simd',
      '--importMemory',
      '--noAssert',
      '--noExportMemory',
    ],
    {
      readFile: (name, baseDir) => {
        const path = resolve(baseDir, name);
        let text;
        try {
          text = readFileSync(path, 'utf8');
        } catch {
          return null;
        }
        if (!path.startsWith(sourceFolder)) return text;
        if (module.relaxed === true && path.endsWith('math.ts')) {
          if (!text.includes(standardMadd)) throw new Error(`build-wasm: math.ts no longer holds "${standardMadd}" for the relaxed set`);
          text = text.replace(standardMadd, relaxedMadd);
        }
        return expandLaneLoops(text, path.endsWith('steps.ts'));
      },
      writeFile: (name, contents) => {
        if (name.endsWith('.wasm')) bytes = contents;
      },
      stdout: { write: () => true },
      stderr: {
        write: (text) => {
          errors.push(String(text));
          return true;
        },
      },
    },
  );
  if (error !== null && error !== undefined) {
    process.stderr.write(errors.join(''));
    console.error(`build-wasm: ${module.entry} did not compile: ${error.message}`);
    process.exit(1);
  }
  // No static data: the backends hand the module's memory to tensors from byte 64 on (memory.ts), so a data segment
  // (AssemblyScript writes one for Math's lookup tables, for one) would be overwritten by the first tensor.
  const dataSection = sectionsOf(bytes).find((section) => section.id === 11);
  if (dataSection !== undefined && dataSection.size > 1) {
    console.error(
      `build-wasm: ${module.output} has a data section of ${dataSection.size} bytes; the kernels must keep no static data (use no Math.* that needs tables)`,
    );
    process.exit(1);
  }
  // An engine without relaxed SIMD (Node 20) cannot compile the relaxed set to list its exports: they are its
  // standard twin's (the same entry), listed when that was built (first in the list above).
  const exports =
    module.relaxed === true && !WebAssembly.validate(bytes)
      ? exportsOf.get(module.entry)
      : WebAssembly.Module.exports(new WebAssembly.Module(bytes))
          .map((e) => e.name)
          .filter((n) => n !== 'memory');
  if (exports === undefined) throw new Error(`build-wasm: no export list for ${module.output}`);
  exportsOf.set(module.entry, exports);
  const text =
    `// Generated by scripts/build-wasm.mjs from packages/core/wasm/${module.entry}: do not edit, do not commit.\n` +
    `// ${module.what}; ${bytes.length} bytes of WebAssembly (${module.relaxed === true ? 'relaxed SIMD' : 'SIMD'}), base64.\n` +
    `export const ${module.name}: string =\n  '${Buffer.from(bytes).toString('base64')}';\n` +
    `/** The functions the module exports. */\n` +
    `export const ${module.name.replace('Base64', 'Exports')} = ${JSON.stringify(exports)} as const;\n`;
  const temporary = `${target}.${process.pid}.tmp`;
  writeFileSync(temporary, text);
  renameSync(temporary, target);
  console.log(`build-wasm: ${module.entry} → ${module.output} (${bytes.length} bytes)`);
}
