import { describe, expect, it } from 'vitest';
import { bytesPerElement, dtypeOf, isDType } from '@weft/core';

describe('element types', () => {
  it('are f32 for Float32Array and f64 for Float64Array, of 4 and 8 bytes (IEEE 754 binary32 and binary64)', () => {
    expect([dtypeOf(new Float32Array(1)), dtypeOf(new Float64Array(1))]).toEqual(['f32', 'f64']);
    expect([bytesPerElement('f32'), bytesPerElement('f64')]).toEqual([Float32Array.BYTES_PER_ELEMENT, Float64Array.BYTES_PER_ELEMENT]);
  });

  it('are the two words f32 and f64 and nothing else', () => {
    expect(['f32', 'f64', 'f16', 'F32', 32, null].map(isDType)).toEqual([true, true, false, false, false, false]);
  });
});
