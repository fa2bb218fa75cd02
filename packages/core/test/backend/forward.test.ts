import { describe, expect, it } from 'vitest';
import { javascriptForward } from '@weft/core/forward';

describe("the runtime's JavaScript forward backend", () => {
  it('runs the layer-step kernels on ordinary f32 arrays, weight matrices as they are, and names itself', () => {
    expect(javascriptForward.name).toBe('javascript');
    expect(Object.keys(javascriptForward.kernels).sort()).toEqual(['affineRows', 'gruLayerStep', 'lstmLayerStep', 'plainLayerStep']);
    const floats = javascriptForward.floats(3);
    expect(floats).toBeInstanceOf(Float32Array);
    expect(Array.from(floats)).toEqual([0, 0, 0]);
    expect(Array.from(javascriptForward.matrix([1, 2, 3, 4], 2, 2))).toEqual([1, 2, 3, 4]);
    javascriptForward.release(floats);
    expect(javascriptForward.describe()).toBe('javascript (typed-array kernels)');
  });
});
