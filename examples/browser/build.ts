/**
 * Builds the page: esbuild bundles src/page.ts, src/worker.ts and src/shard.ts (a training thread) (with the weft packages) into dist/ as browser
 * ESM. Run: npx tsx examples/browser/build.ts
 */
import { build } from 'esbuild';
import { fileURLToPath } from 'node:url';

export async function buildPage(): Promise<void> {
  const folder = fileURLToPath(new URL('.', import.meta.url));
  await build({
    entryPoints: [`${folder}src/page.ts`, `${folder}src/worker.ts`, `${folder}src/shard.ts`],
    outdir: `${folder}dist`,
    bundle: true,
    format: 'esm',
    platform: 'browser',
    target: 'es2022',
    sourcemap: true,
    logLevel: 'warning',
  });
}

if (process.argv[1] !== undefined && fileURLToPath(import.meta.url) === process.argv[1]) await buildPage();
