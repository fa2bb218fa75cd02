/**
 * The library packages must run in a browser: nothing under their `src` may import a Node built-in (or anything
 * through the `node:` scheme). Node-only code lives in separate entry points outside these folders.
 */
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { builtinModules } from 'node:module';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

const root = fileURLToPath(new URL('..', import.meta.url));
const libraryPackages = ['core', 'cells', 'optim', 'io'];

/** Source files under `folder`, leaving out `node/` folders: the clearly separate Node-only entry points. */
function sourceFiles(folder: string): string[] {
  const files: string[] = [];
  for (const entry of readdirSync(folder)) {
    const path = join(folder, entry);
    if (statSync(path).isDirectory()) {
      if (entry !== 'node') files.push(...sourceFiles(path));
    } else if (path.endsWith('.ts')) {
      files.push(path);
    }
  }
  return files;
}

function importedSpecifiers(text: string): string[] {
  const found: string[] = [];
  const patterns = [
    /\bfrom\s+['"]([^'"]+)['"]/g,
    /\bimport\s*\(\s*['"]([^'"]+)['"]\s*\)/g,
    /\bimport\s+['"]([^'"]+)['"]/g,
    /\brequire\s*\(\s*['"]([^'"]+)['"]\s*\)/g,
  ];
  for (const pattern of patterns) for (const match of text.matchAll(pattern)) found.push(match[1]);
  return found;
}

const builtins = new Set(builtinModules.flatMap((name) => [name, `node:${name}`]));

describe('browser safety', () => {
  const present = libraryPackages.filter((name) => readdirSync(join(root, 'packages')).includes(name));

  it('finds at least the core package to scan', () => {
    expect(present).toContain('core');
  });

  for (const name of present) {
    const folder = join(root, 'packages', name, 'src');
    it(`packages/${name}/src imports no Node built-in`, () => {
      const files = sourceFiles(folder);
      expect(files.length).toBeGreaterThan(0);
      const offenders: string[] = [];
      for (const file of files) {
        for (const specifier of importedSpecifiers(readFileSync(file, 'utf8'))) {
          if (specifier.startsWith('node:') || builtins.has(specifier) || builtins.has(specifier.split('/')[0])) {
            offenders.push(`${file}: ${specifier}`);
          }
        }
      }
      expect(offenders).toEqual([]);
    });
  }

  it('the scanner itself recognises a Node import', () => {
    const specifiers = importedSpecifiers(`import { readFileSync } from 'node:fs';\nimport path from "path";\nconst m = await import('os');`);
    expect(specifiers.filter((s) => builtins.has(s))).toEqual(['node:fs', 'path', 'os']);
  });
});
