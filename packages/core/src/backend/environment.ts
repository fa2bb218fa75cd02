/** Reading the backend asked for by the environment, where there is one to read (Node, Bun, Deno with permission). */

/**
 * The backend named by the environment variable WEFT_BACKEND, where a `process` exists and may read it; undefined
 * when it is unset, empty, or not readable (Deno without `--allow-env` throws on the read: taken as unset, so the
 * default choice stands).
 */
export function environmentBackendChoice(): string | undefined {
  return environmentValue('WEFT_BACKEND');
}

/**
 * The WebAssembly kernel set named by the environment variable WEFT_KERNELS (`standard` or `relaxed`), read as
 * WEFT_BACKEND is; undefined when unset, empty or not readable.
 */
export function environmentKernelChoice(): string | undefined {
  return environmentValue('WEFT_KERNELS');
}

function environmentValue(name: 'WEFT_BACKEND' | 'WEFT_KERNELS'): string | undefined {
  const host = globalThis as { process?: { env?: Record<string, string | undefined> } };
  let value: string | undefined;
  try {
    value = host.process?.env?.[name];
  } catch {
    return undefined;
  }
  return value === undefined || value === '' ? undefined : value;
}
