/**
 * `--backend javascript|webassembly` for the verbs that compute (train, run, sample, check): which kernels run.
 * The default is the library's: WebAssembly SIMD where this Node validates it, else JavaScript (WEFT_BACKEND
 * overrides it, as for the library). A backend this machine cannot run is a one-line error naming what is missing.
 */
import { WeftError, defaultBackend, setDefaultBackend, webAssemblyUnavailable } from '@weft/core';
import type { Backend, BackendName } from '@weft/core';
import type { FlagSpec, ParsedArgs } from './args.js';
import { choiceFlag } from './args.js';
import { CommandError } from './errors.js';

export const backendFlag: FlagSpec = {
  name: 'backend',
  value: 'javascript|webassembly',
  description: 'which kernels compute',
  fallback: 'webassembly where this platform runs WebAssembly SIMD, else javascript',
};

/** Chooses the backend for this command (before any tensor is made) and returns it. */
export function chooseBackend(args: ParsedArgs): Backend {
  if (!args.flags.has('backend')) return defaultBackend();
  const name = choiceFlag(args, 'backend', ['javascript', 'webassembly'] as const, 'javascript') as BackendName;
  if (name === 'webassembly') {
    const missing = webAssemblyUnavailable();
    if (missing !== null) throw new CommandError(`--backend webassembly: ${missing}; use --backend javascript`, 2);
  }
  try {
    return setDefaultBackend(name);
  } catch (error) {
    if (error instanceof WeftError) throw new CommandError(error.message, 2);
    throw error;
  }
}
