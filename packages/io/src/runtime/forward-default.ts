/**
 * The runtime's default backend when a runtime is made without one. The `@weft/io/runtime` entry installs a
 * chooser that takes WebAssembly SIMD where the platform runs it (else JavaScript); the
 * `@weft/io/runtime/javascript` entry leaves the JavaScript backend in place, so its bundle carries no
 * WebAssembly bytes.
 */
import type { ForwardBackend } from '@weft/core/forward/javascript';
import { javascriptForward } from '@weft/core/forward/javascript';

type Chooser = (weightBytes: number) => ForwardBackend;

let chooser: Chooser = () => javascriptForward;

export function defaultForward(weightBytes: number): ForwardBackend {
  return chooser(weightBytes);
}

export function setForwardChooser(choose: Chooser): void {
  chooser = choose;
}
