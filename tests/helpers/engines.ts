/**
 * Other JavaScript engines for the tests, taken from their npm registry packages at exact versions (no download
 * from anywhere else): Deno from `@deno/linux-x64-glibc`, Bun from `@oven/bun-linux-x64`. Each is packed once into
 * node_modules/.cache/weft-engines and unpacked there; on a platform without such a package (not linux-x64) there
 * is none, and the caller says so.
 */
import { execFileSync } from 'node:child_process';
import { chmodSync, existsSync, mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

/** An engine the tests can run a module with. */
export interface Engine {
  /** "deno" or "bun". */
  readonly name: string;
  /** The exact version run. */
  readonly version: string;
  /** The executable and the arguments that run `script` with every permission it needs. */
  readonly command: (script: string) => [string, string[]];
}

const cache = fileURLToPath(new URL('../../node_modules/.cache/weft-engines/', import.meta.url));

const KNOWN = [
  { name: 'deno', version: '2.9.6', registry: '@deno/linux-x64-glibc', binary: 'package/deno', args: (script: string) => ['run', '--allow-all', script] },
  { name: 'bun', version: '1.4.5', registry: '@oven/bun-linux-x64', binary: 'package/bin/bun', args: (script: string) => [script] },
] as const;

/** Deno and Bun, unpacked from the registry on first use; none off linux-x64. */
export function otherEngines(): Engine[] {
  if (process.platform !== 'linux' || process.arch !== 'x64') return [];
  return KNOWN.map((known) => {
    const folder = join(cache, `${known.name}-${known.version}`);
    const executable = join(folder, known.binary);
    if (!existsSync(executable)) {
      mkdirSync(folder, { recursive: true });
      const packed = execFileSync('npm', ['pack', `${known.registry}@${known.version}`, '--pack-destination', folder, '--silent'], {
        encoding: 'utf8',
        env: { ...process.env, npm_config_loglevel: 'error' },
      })
        .trim()
        .split('\n')
        .pop()!;
      execFileSync('tar', ['-xzf', join(folder, packed), '-C', folder]);
      chmodSync(executable, 0o755);
    }
    return { name: known.name, version: known.version, command: (script: string) => [executable, known.args(script)] };
  });
}
