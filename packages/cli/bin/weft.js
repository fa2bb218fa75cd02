#!/usr/bin/env node
// The `weft` command as npm links it. This file is committed (dist/ is build output), so npm can link it when it
// installs, before anything is built; it loads the built command, or says how to build it.
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

const built = new URL('../dist/main.js', import.meta.url);
if (!existsSync(fileURLToPath(built))) {
  process.stderr.write('weft: the command is not built yet; run `npm run build` (or `npm run demo`) in the repository first\n');
  process.exit(1);
}
const { runCommand } = await import(built.href);
runCommand(process.argv.slice(2));
