/** What the examples share: their budget switch and running a main only when the file is run directly. */
import { realpathSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

/** True when the example should run on a small budget (the tests set WEFT_EXAMPLE_BUDGET=small). */
export function smallBudget(): boolean {
  return process.env.WEFT_EXAMPLE_BUDGET === 'small';
}

/** Runs `main` when `moduleUrl` is the file node was started with. */
export function runIfMain(moduleUrl: string, main: () => Promise<unknown> | unknown): void {
  const started = process.argv[1];
  if (started === undefined) return;
  let same = false;
  try {
    same = realpathSync(started) === fileURLToPath(moduleUrl);
  } catch {
    same = false;
  }
  if (same) {
    Promise.resolve(main()).catch((error: unknown) => {
      console.error(error instanceof Error ? error.message : String(error));
      process.exitCode = 1;
    });
  }
}
