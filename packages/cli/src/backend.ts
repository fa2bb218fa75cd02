/**
 * `--backend javascript|webassembly` for the verbs that compute (train, run, sample, check): which kernels run.
 * The default is the library's: WebAssembly SIMD where this Node validates it, else JavaScript (WEFT_BACKEND
 * overrides it, as for the library). A backend this machine cannot run is a one-line error naming what is missing.
 * `--kernels standard|relaxed` (train, check) picks the WebAssembly backend's build of its kernels: the standard set
 * (the default, the same bits on every engine) or the relaxed set (fused multiply-adds where this Node validates
 * relaxed SIMD: faster, other bits).
 */
import { WeftError, createWebAssemblyBackend, defaultBackend, relaxedKernelsUnavailable, setDefaultBackend, webAssemblyUnavailable } from '@weft/core';
import type { Backend, BackendName, KernelSet } from '@weft/core';
import type { FlagSpec, ParsedArgs } from './args.js';
import { choiceFlag } from './args.js';
import { CommandError } from './errors.js';

export const backendFlag: FlagSpec = {
  name: 'backend',
  value: 'javascript|webassembly',
  description: 'which kernels compute',
  fallback: 'webassembly where this platform runs WebAssembly SIMD, else javascript',
};

export const kernelsFlag: FlagSpec = {
  name: 'kernels',
  value: 'standard|relaxed',
  description: "the WebAssembly backend's kernels: standard SIMD (the same bits on every engine) or relaxed (fused multiply-adds: faster, other bits)",
  fallback: 'standard, or WEFT_KERNELS',
};

/** What a model trained on `backend` records of it in its file: the backend and, for WebAssembly, its kernel set. */
export function kernelRecord(backend: Backend): string {
  return backend.kernelSet === null ? backend.name : `${backend.name} ${backend.kernelSet}`;
}

/** Chooses the backend for this command (before any tensor is made) and returns it. */
export function chooseBackend(args: ParsedArgs): Backend {
  if (args.flags.has('kernels')) return chooseKernels(args);
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

/** `--kernels`: a WebAssembly backend of that kernel set (refused with `--backend javascript`). */
function chooseKernels(args: ParsedArgs): Backend {
  const set = choiceFlag(args, 'kernels', ['standard', 'relaxed'] as const, 'standard') as KernelSet;
  if (args.flags.get('backend') === 'javascript')
    throw new CommandError('--kernels chooses among the WebAssembly kernels; leave it out with --backend javascript', 2);
  const missing = webAssemblyUnavailable() ?? (set === 'relaxed' ? relaxedKernelsUnavailable() : null);
  if (missing !== null) throw new CommandError(`--kernels ${set}: ${missing}; use ${set === 'relaxed' ? '--kernels standard' : '--backend javascript'}`, 2);
  try {
    return setDefaultBackend(createWebAssemblyBackend({ kernels: set }));
  } catch (error) {
    if (error instanceof WeftError) throw new CommandError(error.message, 2);
    throw error;
  }
}
