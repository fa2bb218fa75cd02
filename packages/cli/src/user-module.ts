/**
 * A module of the user's own (`weft check --module FILE`), loaded by path: JavaScript as it is, TypeScript (`.ts`,
 * `.mts`, `.cts`) through Node's own type stripping where this Node has it (22.18 and later by default), or else
 * through tsx where the user's project has it installed; otherwise a one-line error saying which of the two to get.
 * The maker it exports is checked before it is called: a class, or anything that is not a function, is a one-line
 * error naming the file and the export and saying what is expected.
 */
import { createRequire } from 'node:module';
import { existsSync, readFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { CommandError } from './errors.js';

const TYPESCRIPT = /\.(?:ts|mts|cts)$/i;

/** True when this Node strips TypeScript types itself (process.features.typescript, Node 22.18+ / 23.6+). */
export function nodeStripsTypes(): boolean {
  return Boolean((process.features as { typescript?: unknown }).typescript);
}

/**
 * The `tsImport` of tsx's ES module API (`tsx/esm/api`, its `import` export), found from the module's folder or the
 * working folder, or null.
 */
async function tsxImporter(file: string): Promise<((specifier: string, parent: string) => Promise<unknown>) | null> {
  for (const from of [file, resolve('package.json')]) {
    let manifest: string;
    try {
      manifest = createRequire(from).resolve('tsx/package.json');
    } catch {
      continue; // Not installed there: try the next place.
    }
    const exported = (JSON.parse(readFileSync(manifest, 'utf8')) as { exports?: Record<string, { import?: { default?: string } | string }> }).exports?.[
      './esm/api'
    ]?.import;
    const target = typeof exported === 'string' ? exported : exported?.default;
    if (target === undefined) continue;
    const loaded = (await import(pathToFileURL(join(dirname(manifest), target)).href)) as {
      tsImport?: (specifier: string, parent: string) => Promise<unknown>;
    };
    if (typeof loaded.tsImport === 'function') return loaded.tsImport;
  }
  return null;
}

/** The module at `path`, loaded as the file's comment says, or a one-line error naming the path. */
export async function loadUserModule(path: string): Promise<Record<string, unknown>> {
  const file = resolve(path);
  if (!existsSync(file)) throw new CommandError(`${path}: no such file`);
  const url = pathToFileURL(file).href;
  try {
    if (!TYPESCRIPT.test(file) || nodeStripsTypes()) return (await import(url)) as Record<string, unknown>;
    const tsImport = await tsxImporter(file);
    if (tsImport === null) {
      throw new CommandError(
        `${path}: a TypeScript module needs Node 22.18 or later (it strips the types itself; this is Node ${process.version}), or tsx installed beside it (npm install --save-dev tsx); or compile it to JavaScript first`,
      );
    }
    return (await tsImport(url, url)) as Record<string, unknown>;
  } catch (error) {
    if (error instanceof CommandError) throw error;
    throw new CommandError(`${path}: could not load the module: ${(error as Error).message.split('\n')[0]}`);
  }
}

/**
 * The export `name` of a loaded module as a maker function, or a one-line error naming the file and export: a class
 * (makers are called without `new`), or a value that is not a function, says what is expected instead.
 */
export function makerExport<T extends (...args: never[]) => unknown>(loaded: Record<string, unknown>, path: string, name: string, expected: string): T {
  const maker = loaded[name];
  if (maker === undefined)
    throw new CommandError(
      `${path}: no export ${JSON.stringify(name)} (it exports ${
        Object.keys(loaded)
          .map((k) => JSON.stringify(k))
          .join(', ') || 'nothing'
      }); name one with --export`,
    );
  if (typeof maker !== 'function')
    throw new CommandError(`${path}: export ${JSON.stringify(name)} is ${maker === null ? 'null' : typeof maker}, not a function ${expected}`);
  if (/^class[\s{]/.test(Function.prototype.toString.call(maker))) {
    throw new CommandError(
      `${path}: export ${JSON.stringify(name)} is a class; export a function ${expected} that makes one (for example (request) => new ${maker.name || 'YourCell'}(request))`,
    );
  }
  return maker as T;
}
