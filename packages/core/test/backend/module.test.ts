import { describe, expect, it } from 'vitest';
import { LinearMemory } from '../../src/backend/memory.js';
import { KernelWorkspace, addressing, checkReservation, compileModule, moduleUnavailable } from '../../src/backend/module.js';

describe('what the WebAssembly backends share', () => {
  it('say why bytes that are no module cannot run, in one line naming the backend', () => {
    const garbage = Buffer.from('not a module').toString('base64');
    expect(moduleUnavailable(garbage)).toBe('this platform does not validate WebAssembly SIMD (128-bit) modules');
    expect(() => compileModule(garbage)).toThrowError(
      "Backend unavailable at backend webassembly: expected a platform that runs WebAssembly SIMD, received this platform does not validate WebAssembly SIMD (128-bit) modules (use the 'javascript' backend)",
    );
  });

  it("accept a reservation of 64 KiB to 4 GiB less 64 KiB and refuse others by the option's name", () => {
    expect(checkReservation(65536, 'memoryBytes')).toBe(65536);
    expect(() => checkReservation(1000, 'runtime.memoryBytes')).toThrowError(
      'Invalid option at runtime.memoryBytes: expected a whole number of bytes in [65536, 4294901760], received 1000',
    );
  });

  it("grow the scratch block to the largest size asked, and copy a ragged batch's lengths into the memory", () => {
    const memory = new LinearMemory(1048576);
    const workspace = new KernelWorkspace(memory);
    const first = workspace.scratch(100);
    expect(workspace.scratch(50)).toBe(first);
    expect(workspace.lengths(null, 3)).toBe(0);
    const at = workspace.lengths(Int32Array.of(4, 2, 7), 3);
    expect(Array.from(new Int32Array(memory.buffer, at, 3))).toEqual([4, 2, 7]);
    const wider = workspace.lengths(
      Int32Array.from({ length: 100 }, (_, i) => i),
      100,
    );
    expect(new Int32Array(memory.buffer, wider, 100)[99]).toBe(99);
  });

  it("find an array's byte offset in the memory, −1 for an array of another memory (0 for null where null is allowed)", () => {
    const memory = new LinearMemory(1 << 20);
    const { mine, mineOrNull, at, pointer } = addressing(memory);
    const first = memory.floats(4);
    const second = memory.floats(8);
    const elsewhere = new Float32Array(4);
    expect(at(second) - at(first)).toBeGreaterThanOrEqual(16);
    expect(second.byteOffset).toBe(at(second));
    expect([mine(first), mine(elsewhere), mineOrNull(null), mineOrNull(elsewhere)]).toEqual([true, false, true, false]);
    expect([at(elsewhere), pointer(null), pointer(elsewhere)]).toEqual([-1, 0, -1]);
  });
});
