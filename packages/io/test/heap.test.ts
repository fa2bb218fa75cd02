import { execFileSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

describe('the runtime heap', () => {
  it('stays flat over 10,000 streaming steps (node --expose-gc, heap read after full collections)', () => {
    const probe = fileURLToPath(new URL('./heap-probe.mjs', import.meta.url));
    const output = execFileSync(process.execPath, ['--expose-gc', probe], { encoding: 'utf8' });
    const { before, after } = JSON.parse(output.trim().split('\n').at(-1)!) as { before: number; after: number };
    console.log(`heap in use before ${before} bytes, after 10,000 steps ${after} bytes`);
    // A leak of even 4 bytes a step would show as 40,000 bytes of growth; allow 16 KiB of collector noise. (The
    // heap may also shrink a little as start-up garbage is finally collected; that is not a leak.)
    expect(after - before).toBeLessThan(16 * 1024);
  });
});
