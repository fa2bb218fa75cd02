import { execFileSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

describe('the runtime heap', () => {
  it('stays flat over 10,000 streaming steps (node --expose-gc, heap read after full collections)', () => {
    const probe = fileURLToPath(new URL('./heap-probe.mjs', import.meta.url));
    const output = execFileSync(process.execPath, ['--expose-gc', probe], { encoding: 'utf8' });
    const { before, after, backend } = JSON.parse(output.trim().split('\n').at(-1)!) as { before: number; after: number; backend: string };
    console.log(`heap in use before ${before} bytes, after 10,000 steps ${after} bytes (${backend} backend)`);
    // The probe runs on the default backend, as this test run does (WEFT_BACKEND passes through to it).
    expect(backend).toBe(process.env.WEFT_BACKEND !== undefined && process.env.WEFT_BACKEND !== '' ? process.env.WEFT_BACKEND : 'webassembly');
    // A leak of even 4 bytes a step would show as 40,000 bytes of growth; allow 16 KiB of collector noise. (The
    // heap may also shrink a little as start-up garbage is finally collected; that is not a leak.)
    expect(after - before).toBeLessThan(16 * 1024);
  });
});
