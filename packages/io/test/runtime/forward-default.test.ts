import { describe, expect, it } from 'vitest';
import { javascriptForward } from '@weft/core/forward';
import type { ForwardBackend } from '@weft/core/forward';
import { defaultForward, setForwardChooser } from '../../src/runtime/forward-default.js';

describe("the runtime's default backend", () => {
  it("is what the installed chooser picks for the weights' size, and can be chosen again", () => {
    const asked: number[] = [];
    setForwardChooser((bytes) => {
      asked.push(bytes);
      return javascriptForward as ForwardBackend;
    });
    expect(defaultForward(1234)).toBe(javascriptForward);
    expect(asked).toEqual([1234]);
    setForwardChooser(() => javascriptForward);
  });
});
