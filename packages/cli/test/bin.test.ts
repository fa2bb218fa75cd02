/**
 * `npx weft` after the README's set-up: npm links the committed bin/weft.js at install time (dist/ does not exist
 * then), and it runs the built command, closed pipes and exit codes included.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, realpathSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

const root = fileURLToPath(new URL('../../../', import.meta.url));
const linked = fileURLToPath(new URL('../../../node_modules/.bin/weft', import.meta.url));

describe('the installed weft command', () => {
  it('is linked by npm to the committed bin/weft.js', () => {
    expect(existsSync(linked)).toBe(true);
    expect(realpathSync(linked)).toBe(fileURLToPath(new URL('../bin/weft.js', import.meta.url)));
  });

  it('answers npx weft --help and --version, and exits 2 on an unknown verb', () => {
    const help = spawnSync('npx', ['--no-install', 'weft', '--help'], { cwd: root, encoding: 'utf8', timeout: 60_000 });
    expect(help.status).toBe(0);
    expect(help.stdout).toContain('usage: weft VERB [flags]');
    const version = spawnSync(linked, ['--version'], { encoding: 'utf8' });
    expect(version.stdout.trim()).toMatch(/^\d+\.\d+\.\d+$/);
    const unknown = spawnSync(linked, ['weave'], { encoding: 'utf8' });
    expect(unknown.status).toBe(2);
    expect(unknown.stderr).toMatch(/^weft: unknown verb "weave"/);
  });
});
