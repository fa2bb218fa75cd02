/**
 * The packages as a user gets them: `npm pack` of every workspace (its `prepack` builds), the tarballs installed
 * into a fresh project outside the repository with `npm install --offline` (no network, no workspace links), then
 * (1) every entry imported from an ES module and a tiny train + save + runtime forecast run through them,
 * (2) every entry through require() from CommonJS, (3) a consumer .ts type-checked against the installed
 * declarations with moduleResolution nodenext and bundler, (4) the installed `weft --version` and `weft check`.
 * In Debian's Chromium: (B) a page with nothing but an import map onto the installed files (no bundler) trains
 * and streams, ending at the same loss bits as Node; (C) on a plain-http origin that is not a secure context
 * (a made-up host name mapped to the loopback server by Chromium's host-resolver rules), a weight file loads with
 * its digest verified (by the plain-TypeScript SHA-256, since such a page has no Web Crypto). In Deno and Bun
 * (helpers/engines.ts: their npm registry packages at exact versions, on linux-x64), the same ES module as in Node:
 * the same training loss bits, weight file text, forecasts of both runtimes and character model outputs, bit for bit.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { copyFileSync, existsSync, lstatSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:http';
import type { Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { tmpdir } from 'node:os';
import { extname, join, normalize } from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium } from 'playwright-core';
import { otherEngines } from './helpers/engines.js';
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

const root = fileURLToPath(new URL('..', import.meta.url));
const fixtures = fileURLToPath(new URL('./consumer/', import.meta.url));
const packageNames = ['core', 'cells', 'optim', 'io', 'cli'];
const executable = '/usr/bin/chromium';
const browserAvailable = existsSync(executable);
if (!browserAvailable && process.env.CI !== undefined) throw new Error(`${executable} is missing: .ci/run should have installed Debian's chromium`);

const folder = mkdtempSync(join(tmpdir(), 'weft-installed-'));
const tarballs = join(folder, 'tarballs');
const project = join(folder, 'project');
let nodeResult: {
  missing: number;
  backend: string;
  steps: number;
  firstLoss: number;
  lastLoss: number;
  lastLossBits: string;
  digestVerified: boolean;
  forecasts: number[][];
  textModel: { losses: string[]; outputs: string[] };
  refused: string;
  savedVerified: boolean;
  text: string;
};

function run(command: string, args: string[], cwd: string): { status: number | null; stdout: string; stderr: string } {
  // The consumer runs on the default backend whatever this suite's WEFT_BACKEND, as the page does, so the two
  // runs compare like with like.
  const env: NodeJS.ProcessEnv = { ...process.env, NODE_OPTIONS: '' };
  delete env.WEFT_BACKEND;
  const result = spawnSync(command, args, { cwd, encoding: 'utf8', env });
  return { status: result.status, stdout: result.stdout, stderr: result.stderr };
}

beforeAll(() => {
  mkdirSync(tarballs, { recursive: true });
  mkdirSync(project, { recursive: true });
  execFileSync('npm', ['pack', '--workspaces', '--pack-destination', tarballs, '--silent'], {
    cwd: root,
    stdio: 'pipe',
    env: { ...process.env, npm_config_loglevel: 'error' },
  });
  writeFileSync(join(project, 'package.json'), JSON.stringify({ name: 'weft-consumer', private: true, type: 'module' }));
  const files = readdirSync(tarballs)
    .filter((name) => name.endsWith('.tgz'))
    .map((name) => join(tarballs, name));
  execFileSync('npm', ['install', '--offline', '--no-audit', '--no-fund', '--silent', ...files], { cwd: project, stdio: 'pipe' });
  for (const name of readdirSync(fixtures)) copyFileSync(join(fixtures, name), join(project, name));
}, 180_000);

afterAll(() => rmSync(folder, { recursive: true, force: true }));

describe('the packed tarballs', () => {
  const listing = (name: string) => {
    const file = readdirSync(tarballs).find((f) => f.startsWith(`weft-${name}-`));
    return execFileSync('tar', ['-tzf', join(tarballs, file ?? 'missing')], { encoding: 'utf8' })
      .split('\n')
      .filter((line) => line !== '');
  };

  for (const name of packageNames) {
    it(`@weft/${name} holds its built modules with declarations and maps, the sources, a README and the licence, and no build-info file`, () => {
      const entries = listing(name);
      for (const required of [
        'package/package.json',
        'package/README.md',
        'package/LICENSE',
        'package/dist/index.js',
        'package/dist/index.d.ts',
        'package/dist/index.js.map',
        'package/dist/index.d.ts.map',
        'package/src/index.ts',
      ]) {
        expect(entries, required).toContain(required);
      }
      expect(entries.filter((entry) => entry.includes('tsbuildinfo'))).toEqual([]);
      expect(readFileSync(join(project, 'node_modules/@weft', name, 'LICENSE'), 'utf8')).toContain('MIT License');
    });

    it(`@weft/${name} says where it lives and which Node it needs, allows patch releases of its siblings, and serves import and require`, () => {
      const manifest = JSON.parse(readFileSync(join(project, 'node_modules/@weft', name, 'package.json'), 'utf8'));
      expect(manifest.repository.url).toMatch(/^git\+https:/);
      expect(manifest.homepage).toMatch(/^https:/);
      expect(manifest.engines.node).toBe('>=20.19');
      expect(manifest.publishConfig.access).toBe('public');
      expect(manifest.scripts.prepack).toBeDefined();
      for (const [sibling, range] of Object.entries(manifest.dependencies ?? {})) {
        expect(`${sibling} ${String(range)}`).toMatch(/^@weft\/\w+ \^0\.1\.0$/);
      }
      for (const [entry, conditions] of Object.entries(manifest.exports as Record<string, Record<string, string>>)) {
        expect(Object.keys(conditions), entry).toEqual(['types', 'import', 'require', 'default']);
      }
    });
  }

  it('installs as real folders, not links back into the repository, with no dependency outside weft', () => {
    const installed = readdirSync(join(project, 'node_modules/@weft'));
    expect(installed.sort()).toEqual([...packageNames].sort());
    for (const name of installed) expect(lstatSync(join(project, 'node_modules/@weft', name)).isSymbolicLink(), name).toBe(false);
    expect(
      readdirSync(join(project, 'node_modules'))
        .filter((name) => !name.startsWith('.'))
        .sort(),
    ).toEqual(['@weft']);
  });
});

describe('the installed packages in Node', () => {
  it('import from an ES module, entry by entry, and train, save and forecast through the runtime', () => {
    const result = run('node', ['node-esm.mjs'], project);
    expect(result.stderr).toBe('');
    expect(result.status).toBe(0);
    nodeResult = JSON.parse(result.stdout);
    expect(nodeResult.missing).toBe(0);
    expect(nodeResult.steps).toBeGreaterThan(10);
    expect(nodeResult.lastLoss).toBeLessThan(nodeResult.firstLoss);
    expect(nodeResult.digestVerified).toBe(true);
    expect(nodeResult.savedVerified).toBe(true);
    expect(nodeResult.refused).toBe('WeftError bad_weight_file');
    // The WebAssembly and the JavaScript runtimes agree on the forecast (f32 sums in other orders).
    const [wasm, plain] = nodeResult.forecasts;
    expect(wasm).toHaveLength(40);
    for (let i = 0; i < 40; i++) expect(Math.abs(wasm[i] - plain[i])).toBeLessThanOrEqual(1e-5 * Math.max(1, Math.abs(plain[i])));
  }, 60_000);

  it('load through require() from CommonJS, as the same modules an ES import gets', () => {
    const result = run('node', ['node-require.cjs'], project);
    expect(result.stderr).toBe('');
    expect(result.status).toBe(0);
    const report = JSON.parse(result.stdout) as { loaded: Record<string, number>; sameErrorType: boolean; sameModule: boolean; draw: number };
    expect(Object.keys(report.loaded)).toHaveLength(18);
    for (const [entry, count] of Object.entries(report.loaded)) expect(count, entry).toBeGreaterThan(0);
    expect(report.sameErrorType).toBe(true);
    expect(report.sameModule).toBe(true);
  }, 30_000);

  for (const resolution of [
    { module: 'nodenext', moduleResolution: 'nodenext' },
    { module: 'esnext', moduleResolution: 'bundler' },
  ]) {
    it(`type-check a consumer's TypeScript against the installed declarations (moduleResolution ${resolution.moduleResolution})`, () => {
      const config = join(project, `tsconfig.${resolution.moduleResolution}.json`);
      writeFileSync(
        config,
        JSON.stringify({
          compilerOptions: {
            ...resolution,
            target: 'es2022',
            strict: true,
            noEmit: true,
            skipLibCheck: false,
            types: ['node'],
            typeRoots: [join(root, 'node_modules/@types')],
          },
          files: ['consumer.ts'],
        }),
      );
      const result = run('node', [join(root, 'node_modules/typescript/bin/tsc'), '-p', config], project);
      expect(result.stdout + result.stderr).toBe('');
      expect(result.status).toBe(0);
    }, 60_000);
  }

  it('run the installed weft command: --version and the gradient checks', () => {
    const weft = join(project, 'node_modules/.bin/weft');
    const version = run(weft, ['--version'], project);
    expect(version.stdout.trim()).toBe(JSON.parse(readFileSync(join(root, 'packages/cli/package.json'), 'utf8')).version);
    const check = run(weft, ['check'], project);
    expect(check.status).toBe(0);
    expect(check.stdout).toMatch(/all \d+ gradient checks passed/);
  }, 60_000);

  it('bundle an app that makes new Runtime(file) from the installed tarballs with esbuild and with rollup, tree shaking on: it runs on WebAssembly', async () => {
    const { build } = await import('esbuild');
    const { rollup } = await import('rollup');
    const { nodeResolve } = await import('@rollup/plugin-node-resolve');
    writeFileSync(
      join(project, 'app.mjs'),
      "import { Runtime, readWeightFile } from '@weft/io/runtime';\n" +
        "const text = process.argv[2] === undefined ? null : (await import('node:fs')).readFileSync(process.argv[2], 'utf8');\n" +
        'const runtime = new Runtime(await readWeightFile(text));\nconsole.log(JSON.stringify({ backend: runtime.backend.name, out: Array.from(runtime.streams(1).step(Float32Array.of(0.5))) }));\n',
    );
    nodeResult ??= JSON.parse(run('node', ['node-esm.mjs'], project).stdout);
    writeFileSync(join(project, 'from-node.weft.json'), nodeResult.text);
    const esbuilt = await build({
      entryPoints: [join(project, 'app.mjs')],
      bundle: true,
      treeShaking: true,
      format: 'esm',
      platform: 'node',
      write: false,
      logLevel: 'silent',
    });
    expect(esbuilt.warnings.map((w) => w.text)).toEqual([]);
    writeFileSync(join(project, 'app.esbuild.mjs'), esbuilt.outputFiles[0].contents);
    const warnings: string[] = [];
    const bundle = await rollup({
      input: join(project, 'app.mjs'),
      treeshake: true,
      external: [/^node:/],
      plugins: [nodeResolve({ rootDir: project, exportConditions: ['import', 'default'] })],
      onwarn: (w) => warnings.push(w.message),
    });
    await bundle.write({ file: join(project, 'app.rollup.mjs'), format: 'es', inlineDynamicImports: true });
    await bundle.close();
    expect(warnings).toEqual([]);
    const direct = JSON.parse(run('node', ['app.mjs', 'from-node.weft.json'], project).stdout);
    for (const file of ['app.esbuild.mjs', 'app.rollup.mjs']) {
      const result = run('node', [file, 'from-node.weft.json'], project);
      expect(result.stderr, file).toBe('');
      const bundled = JSON.parse(result.stdout);
      expect(bundled.backend, file).toBe('webassembly');
      expect(bundled.out, file).toEqual(direct.out);
    }
  }, 120_000);

  it('check a cell written in TypeScript with the installed weft check --module, where this Node strips types (else say what to get)', () => {
    copyFileSync(fileURLToPath(new URL('../packages/cli/test/fixtures/gated-cell.ts', import.meta.url)), join(project, 'cell.ts'));
    const result = run(join(project, 'node_modules/.bin/weft'), ['check', '--module', 'cell.ts', '--export', 'makeCell'], project);
    if ((process.features as { typescript?: unknown }).typescript) {
      expect(result.stderr).toBe('');
      expect(result.status).toBe(0);
      expect(result.stdout).toMatch(/all 1 gradient checks passed/);
    } else {
      // Node 20: no type stripping, and the fresh project has no tsx.
      expect(result.status).toBe(1);
      expect(result.stderr).toMatch(/^weft: cell\.ts: a TypeScript module needs Node 22\.18 or later/);
    }
  }, 60_000);
});

const types: Record<string, string> = {
  '.html': 'text/html',
  '.js': 'text/javascript',
  '.mjs': 'text/javascript',
  '.json': 'application/json',
  '.map': 'application/json',
};

/** A static file server over the consumer project (its node_modules included), for the page. */
function serve(): Promise<Server> {
  const server = createServer((request, response) => {
    const path = normalize(join(project, decodeURIComponent(new URL(request.url ?? '/', 'http://x').pathname)));
    if (!path.startsWith(project) || !existsSync(path) || lstatSync(path).isDirectory()) {
      response.writeHead(404).end();
      return;
    }
    // A page named strict-*.html comes with a Content-Security-Policy that allows its nonce's scripts and its own
    // origin's modules, and not 'wasm-unsafe-eval': no WebAssembly may be compiled on it.
    const strict = /\/strict-[^/]*\.html$/.test(path) ? { 'content-security-policy': "script-src 'self' 'nonce-weft'" } : {};
    response.writeHead(200, { 'content-type': types[extname(path)] ?? 'application/octet-stream', ...strict }).end(readFileSync(path));
  });
  return new Promise((resolve) => server.listen(0, '127.0.0.1', () => resolve(server)));
}

/**
 * A page that imports @weft/io/runtime alone and steps Node's weight file once (`window.outputs`, `window.backend`);
 * `nonce` is added to its scripts (for a page served with a Content-Security-Policy).
 */
function runtimePage(name: string, nonce: string): void {
  writeFileSync(
    join(project, name),
    `<!doctype html>\n<meta charset="utf-8">\n<title>the runtime alone</title>\n<link rel="icon" href="data:,">\n` +
      `<script type="importmap"${nonce}>${JSON.stringify({ imports: importMap() })}</script>\n` +
      `<script type="module"${nonce}>\nimport { createRuntime } from '@weft/io/runtime';\n` +
      `const runtime = await createRuntime(await (await fetch('/from-node.weft.json')).text());\n` +
      `window.outputs = Array.from(runtime.streams(1).step(Float32Array.of(0.5)));\nwindow.backend = runtime.backend.name;\n</script>\n`,
  );
}

/** Another engine's run of the consumer (Deno, Bun, Chromium) against Node's: the same bits everywhere. */
function expectSameAsNode(other: Omit<typeof nodeResult, 'text' | 'savedVerified' | 'digestVerified'>): void {
  expect(other.missing).toBe(0);
  expect(other.backend).toBe(nodeResult.backend);
  expect(other.steps).toBe(nodeResult.steps);
  expect(other.lastLossBits).toBe(nodeResult.lastLossBits);
  // Both runtimes (WebAssembly and JavaScript) forecast the same numbers as in Node.
  expect(other.forecasts).toEqual(nodeResult.forecasts);
  // The character model: 20 steps' loss bits and 30 steps of the runtime's outputs, every bit.
  expect(other.textModel.losses).toHaveLength(20);
  expect(other.textModel).toEqual(nodeResult.textModel);
  expect(other.refused).toBe('WeftError bad_weight_file');
}

/** The import map: each installed package's exports, browser condition first, mapped to its files. */
function importMap(): Record<string, string> {
  const imports: Record<string, string> = {};
  for (const name of ['core', 'cells', 'optim', 'io']) {
    const manifest = JSON.parse(readFileSync(join(project, 'node_modules/@weft', name, 'package.json'), 'utf8'));
    for (const [entry, conditions] of Object.entries(manifest.exports as Record<string, Record<string, string>>)) {
      if (entry === './node') continue;
      const file = conditions.browser ?? conditions.import ?? conditions.default;
      imports[`@weft/${name}${entry.slice(1)}`] = `/node_modules/@weft/${name}/${file.replace(/^\.\//, '')}`;
    }
  }
  return imports;
}

const engines = otherEngines();

describe.skipIf(engines.length === 0)('the installed packages in Deno and Bun, from their registry packages', () => {
  for (const engine of engines) {
    it(`${engine.name} ${engine.version}: the same training, weight file, forecasts and text model outputs as Node, to the bit`, () => {
      nodeResult ??= JSON.parse(run('node', ['node-esm.mjs'], project).stdout);
      const [command, args] = engine.command('node-esm.mjs');
      const result = run(command, args, project);
      expect(result.status, result.stderr).toBe(0);
      const other = JSON.parse(result.stdout) as typeof nodeResult;
      console.log(
        `${engine.name} ${engine.version}: backend ${other.backend}, ${other.steps} steps, last loss bits ${other.lastLossBits} (Node ${nodeResult.lastLossBits}); text model's last loss bits ${other.textModel.losses.at(-1)} (Node ${nodeResult.textModel.losses.at(-1)})`,
      );
      expectSameAsNode(other);
      // The weight file it wrote is the same text, saved and read back with its digest verified.
      expect(other.text).toBe(nodeResult.text);
      expect([other.digestVerified, other.savedVerified]).toEqual([true, true]);
    }, 180_000);
  }

  it('runs the runtime in Deno with no permission at all (no --allow-env, no --allow-read): the weight file inline, the same outputs as Node', () => {
    const deno = engines.find((e) => e.name === 'deno')!;
    nodeResult ??= JSON.parse(run('node', ['node-esm.mjs'], project).stdout);
    writeFileSync(
      join(project, 'no-permissions.mjs'),
      `import { createRuntime } from '@weft/io/runtime';\nconst runtime = await createRuntime(${JSON.stringify(nodeResult.text)});\n` +
        `const streams = runtime.streams(1);\nconst out = [];\nfor (let i = 0; i < 20; i++) out.push(streams.step(Float32Array.of(Math.sin(i / 3)))[0]);\n` +
        `console.log(JSON.stringify({ backend: runtime.backend.name, out }));\n`,
    );
    const [executable] = deno.command('no-permissions.mjs');
    const denied = run(executable, ['run', 'no-permissions.mjs'], project);
    expect(denied.status, denied.stderr).toBe(0);
    const inNode = run('node', ['no-permissions.mjs'], project);
    expect(JSON.parse(denied.stdout)).toEqual(JSON.parse(inNode.stdout));
    expect(JSON.parse(denied.stdout).backend).toBe('webassembly');
  }, 60_000);
});

describe.skipIf(!browserAvailable)('the installed packages in Chromium, with an import map and no bundler', () => {
  let browser: Browser;
  let server: Server;
  let port = 0;

  beforeAll(async () => {
    server = await serve();
    port = (server.address() as AddressInfo).port;
    writeFileSync(
      join(project, 'page.html'),
      `<!doctype html>\n<meta charset="utf-8">\n<title>weft from an import map</title>\n<link rel="icon" href="data:,">\n` +
        `<script type="importmap">${JSON.stringify({ imports: importMap() })}</script>\n` +
        `<script type="module">\nimport * as consumer from './train.mjs';\nwindow.consumer = consumer;\n</script>\n`,
    );
    nodeResult ??= JSON.parse(run('node', ['node-esm.mjs'], project).stdout);
    writeFileSync(join(project, 'from-node.weft.json'), nodeResult.text);
    browser = await chromium.launch({
      executablePath: executable,
      headless: true,
      args: [
        '--no-sandbox',
        '--disable-gpu',
        '--disable-quic',
        '--no-first-run',
        '--disable-background-networking',
        '--disable-component-update',
        '--disable-sync',
        '--host-resolver-rules=MAP weft-kiosk.test 127.0.0.1',
      ],
    });
  }, 120_000);

  afterAll(async () => {
    await browser?.close();
    server?.close();
  });

  async function open(origin: string) {
    const page = await browser.newPage();
    const errors: string[] = [];
    page.on('pageerror', (error) => errors.push(error.message));
    page.on('console', (message) => {
      if (message.type() === 'error') errors.push(message.text());
    });
    await page.goto(`${origin}/page.html`);
    await page.waitForFunction(() => 'consumer' in window, undefined, { timeout: 30_000 }).catch(() => undefined);
    return { page, errors };
  }

  it('runs the runtime from an import map loading runtime modules only: no tape, trainer, optimiser or package root', async () => {
    // A page that imports @weft/io/runtime alone and forecasts from Node's weight file; every request is counted.
    runtimePage('runtime.html', '');
    const page = await browser.newPage();
    const requested: { url: string; bytes: number }[] = [];
    page.on('response', async (response) => {
      const url = new URL(response.url()).pathname;
      if (url.endsWith('.js')) requested.push({ url, bytes: (await response.body()).length });
    });
    await page.goto(`http://127.0.0.1:${port}/runtime.html`);
    await page.waitForFunction(() => 'outputs' in window, undefined, { timeout: 30_000 });
    const outputs = await page.evaluate(() => (window as unknown as { outputs: number[] }).outputs);
    expect(outputs).toHaveLength(1);
    expect(Number.isFinite(outputs[0])).toBe(true);
    const modules = requested.map((r) => r.url);
    const bytes = requested.reduce((n, r) => n + r.bytes, 0);
    console.log(
      `the runtime from an import map: ${modules.length} modules, ${bytes} bytes, on ${await page.evaluate(() => (window as unknown as { backend: string }).backend)}`,
    );
    // (The seeded generator, random.js, is the runtime's too: @weft/core/base gives it for sampling.)
    const training = modules.filter((url) =>
      /\/(tape|trainer|tensor|pool|gradient-check)\.js$|\/optim\/|\/ops\/|@weft\/(core|cells|io)\/dist\/index\.js$|\/kernels\/index\.js$/.test(url),
    );
    expect(training).toEqual([]);
    // 42 before the cells' step plans (cells/dist/plans: the plans, their tracer and the traced program's step), the
    // ragged convention's arithmetic and the whole-sequence run joined; 49 now.
    expect(modules.length).toBeLessThanOrEqual(52);
    await page.close();
  }, 60_000);

  it('runs the runtime on JavaScript, with one console note, on a page whose Content-Security-Policy forbids compiling WebAssembly', async () => {
    runtimePage('strict-runtime.html', ' nonce="weft"');
    const page = await browser.newPage();
    const notes: string[] = [];
    const errors: string[] = [];
    page.on('console', (message) => (message.type() === 'warning' ? notes : message.type() === 'error' ? errors : []).push(message.text()));
    page.on('pageerror', (error) => errors.push(error.message));
    await page.goto(`http://127.0.0.1:${port}/strict-runtime.html`);
    await page.waitForFunction(() => 'outputs' in window, undefined, { timeout: 30_000 });
    const result = await page.evaluate(() => ({
      outputs: (window as unknown as { outputs: number[] }).outputs,
      backend: (window as unknown as { backend: string }).backend,
    }));
    console.log(`strict page: backend ${result.backend}; notes: ${notes.join(' | ')}`);
    expect(result.backend).toBe('javascript');
    expect(notes.filter((n) => /WebAssembly/.test(n))).toHaveLength(1);
    expect(errors.filter((e) => !/Content Security Policy|wasm-unsafe-eval|WebAssembly/.test(e))).toEqual([]);
    // The same forecast as the WebAssembly runtime gives elsewhere, to f32 rounding in other summation orders.
    const { createRuntime } = await import('@weft/io/runtime');
    const reference = Array.from(
      (await createRuntime(readFileSync(join(project, 'from-node.weft.json'), 'utf8'), { backend: 'javascript' })).streams(1).step(Float32Array.of(0.5)),
    );
    expect(result.outputs).toEqual(reference);
    await page.close();
  }, 60_000);

  it('trains a small model and streams the runtime, ending at the loss bits Node ends at', async () => {
    expect(nodeResult).toBeDefined();
    const { page, errors } = await open(`http://127.0.0.1:${port}`);
    expect(errors).toEqual([]);
    const result = await page.evaluate(async () => {
      const { text, ...rest } = await (window as unknown as { consumer: { trainAndForecast(): Promise<typeof nodeResult> } }).consumer.trainAndForecast();
      return { ...rest, text: text.length };
    });
    console.log(
      `installed packages, loss after ${result.steps} steps: Chromium ${result.lastLoss} (${result.lastLossBits}), Node ${nodeResult.lastLoss} (${nodeResult.lastLossBits}); backend ${result.backend}`,
    );
    expectSameAsNode(result);
    await page.close();
  }, 60_000);

  it('reads a weight file with its digest verified on a plain-http origin that is not a secure context', async () => {
    const { page, errors } = await open(`http://weft-kiosk.test:${port}`);
    expect(errors).toEqual([]);
    const result = await page.evaluate(async () => {
      const text = await (await fetch('/from-node.weft.json')).text();
      const read = await (
        window as unknown as { consumer: { readAndForecast(text: string): Promise<{ digestChecked: boolean; digestVerified: boolean; forecasts: number[] }> } }
      ).consumer.readAndForecast(text);
      return { secure: window.isSecureContext, subtle: globalThis.crypto?.subtle !== undefined, host: location.hostname, ...read };
    });
    expect(result.host).toBe('weft-kiosk.test');
    expect(result.secure).toBe(false);
    expect(result.subtle).toBe(false);
    expect(result.digestChecked).toBe(true);
    expect(result.digestVerified).toBe(true);
    expect(result.forecasts).toEqual(nodeResult.forecasts[0].slice(0, 10));
    // A damaged copy is still refused there: the digest is really computed.
    const refused = await page.evaluate(async () => {
      const text = await (await fetch('/from-node.weft.json')).text();
      const at = text.indexOf('"data": "') >= 0 ? text.indexOf('"data": "') + 9 : text.indexOf('"data":"') + 8;
      const damaged = text.slice(0, at) + (text[at] === 'A' ? 'B' : 'A') + text.slice(at + 1);
      try {
        await (window as unknown as { consumer: { readAndForecast(text: string): Promise<unknown> } }).consumer.readAndForecast(damaged);
        return 'read';
      } catch (error) {
        return `${(error as Error).name}: ${(error as Error).message}`;
      }
    });
    expect(refused).toMatch(/^WeftError: .*digest\.hex/);
    await page.close();
  }, 60_000);
});
