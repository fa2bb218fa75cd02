/**
 * The dependency arrows point one way: cli → io → cells → core and optim → cells → core (cli also uses optim).
 * Checked three ways for every package: its package.json dependencies, its tsconfig references, and the `@weft/*`
 * specifiers its source files import (with `import type` counted: a type import is an arrow too).
 */
import { readFileSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

const packages = fileURLToPath(new URL('../packages/', import.meta.url));
// What each package may use, besides itself.
const allowed: Record<string, readonly string[]> = {
  core: [],
  cells: ['core'],
  optim: ['cells', 'core'],
  io: ['cells', 'core'],
  cli: ['cells', 'core', 'io', 'optim'],
};

function sourceFiles(folder: string): string[] {
  return readdirSync(folder).flatMap((name) => {
    const path = join(folder, name);
    if (statSync(path).isDirectory()) return sourceFiles(path);
    return name.endsWith('.ts') ? [path] : [];
  });
}

function importedPackages(name: string): Set<string> {
  const found = new Set<string>();
  for (const file of sourceFiles(join(packages, name, 'src'))) {
    for (const match of readFileSync(file, 'utf8').matchAll(/(?:from|import)\s*\(?\s*'@weft\/([a-z]+)/g)) {
      if (match[1] !== name) found.add(match[1]);
    }
  }
  return found;
}

describe('the package dependency graph', () => {
  for (const [name, uses] of Object.entries(allowed)) {
    it(`@weft/${name} uses only ${uses.length === 0 ? 'no other weft package' : uses.map((u) => `@weft/${u}`).join(', ')}, in its manifest, its references and its imports alike`, () => {
      const manifest = JSON.parse(readFileSync(join(packages, name, 'package.json'), 'utf8')) as { dependencies?: Record<string, string> };
      const declared = Object.keys(manifest.dependencies ?? {})
        .filter((d) => d.startsWith('@weft/'))
        .map((d) => d.slice(6))
        .sort();
      const config = JSON.parse(readFileSync(join(packages, name, 'tsconfig.json'), 'utf8')) as { references?: { path: string }[] };
      // A reference names a package folder, or one of its tsconfig files (io's Node entry has its own).
      const referenced = [...new Set((config.references ?? []).map((r) => r.path.replace(/^\.\.\//, '').split('/')[0]))].sort();
      const imported = [...importedPackages(name)].sort();
      expect(declared).toEqual([...uses].sort());
      expect(referenced).toEqual([...uses].sort());
      for (const used of imported) expect(uses, `${name} imports @weft/${used}`).toContain(used);
    });
  }

  it('has no cycle: each package uses only packages that come before it in the build order', () => {
    const order = ['core', 'cells', 'optim', 'io', 'cli'];
    for (const [name, uses] of Object.entries(allowed)) for (const used of uses) expect(order.indexOf(used)).toBeLessThan(order.indexOf(name));
  });
});
