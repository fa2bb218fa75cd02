/**
 * A small static server for the page, on 127.0.0.1 only. Run: npx tsx examples/browser/serve.ts [PORT]
 * (builds first, then serves index.html and dist/).
 */
import { readFile } from 'node:fs/promises';
import { createServer } from 'node:http';
import type { Server } from 'node:http';
import { extname, join, normalize } from 'node:path';
import { fileURLToPath } from 'node:url';
import { buildPage } from './build.js';

const types: Record<string, string> = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.map': 'application/json',
  '.json': 'application/json',
};

export function servePage(port = 0): Promise<{ server: Server; url: string }> {
  const folder = fileURLToPath(new URL('.', import.meta.url));
  const server = createServer(async (request, response) => {
    const path = normalize(decodeURIComponent(new URL(request.url ?? '/', 'http://localhost').pathname)).replace(/^(\.\.[/\\])+/, '');
    const file = join(folder, path === '/' ? 'index.html' : path);
    if (!file.startsWith(folder) || !(path === '/' || path === '/index.html' || path.startsWith('/dist/'))) {
      response.writeHead(404).end('not found');
      return;
    }
    try {
      const body = await readFile(file);
      // The two headers that make the page cross-origin isolated, so its workers may share memory and train on
      // several threads (HTML Living Standard: Cross-Origin-Opener-Policy and Cross-Origin-Embedder-Policy).
      response
        .writeHead(200, {
          'content-type': types[extname(file)] ?? 'application/octet-stream',
          'cache-control': 'no-store',
          'cross-origin-opener-policy': 'same-origin',
          'cross-origin-embedder-policy': 'require-corp',
        })
        .end(body);
    } catch {
      response.writeHead(404).end('not found');
    }
  });
  return new Promise((resolve) =>
    server.listen(port, '127.0.0.1', () => {
      const address = server.address();
      const actual = typeof address === 'object' && address !== null ? address.port : port;
      resolve({ server, url: `http://127.0.0.1:${actual}/` });
    }),
  );
}

if (process.argv[1] !== undefined && fileURLToPath(import.meta.url) === process.argv[1]) {
  await buildPage();
  const { url } = await servePage(Number(process.argv[2] ?? 8080));
  console.log(`weft page at ${url} (Ctrl-C stops)`);
}
