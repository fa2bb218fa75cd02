/**
 * Runs a module script in a Node process of its own where WebAssembly validates but refuses to compile, as a page
 * whose Content-Security-Policy lacks 'wasm-unsafe-eval' refuses it ("Wasm code generation disallowed by embedder"),
 * with WEFT_BACKEND unset and console.warn collected into `notes`. The script's last line should print its result as
 * JSON; this returns it, with whatever went to standard error.
 */
import { spawnSync } from 'node:child_process';

export function withRefusedWebAssembly<T>(body: string): { result: T; stderr: string } {
  const script = `
    const notes = [];
    console.warn = (line) => notes.push(line);
    WebAssembly.Module = function () { throw new WebAssembly.CompileError('Wasm code generation disallowed by embedder'); };
    ${body}`;
  const env = { ...process.env };
  delete env.WEFT_BACKEND;
  const run = spawnSync(process.execPath, ['--input-type=module', '-e', script], { encoding: 'utf8', env });
  return { result: JSON.parse(run.stdout) as T, stderr: run.stderr };
}
