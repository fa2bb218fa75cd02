import { describe, expect, it } from 'vitest';
import { javascriptBackend } from '../../src/backend/javascript.js';
import { memoryOwner, registerMemory } from '../../src/backend/backend.js';

describe('where an array lives', () => {
  it('is the backend that registered its memory, and no backend for an ordinary array', () => {
    const memory = new ArrayBuffer(64);
    registerMemory(memory, javascriptBackend);
    expect(memoryOwner(new Float32Array(memory, 16, 4))).toBe(javascriptBackend);
    expect(memoryOwner(new Float32Array(4))).toBeNull();
  });
});
