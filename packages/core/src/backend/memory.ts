/**
 * The WebAssembly backend's memory: one WebAssembly.Memory, reserved whole when the backend is made and never
 * grown. Growing a memory detaches every typed-array view on it, and tensors hold such views; a memory that never
 * grows keeps every view valid for the life of the backend, so no code anywhere has to re-derive a view. The
 * reservation is address space: pages the kernels have not touched cost no physical memory on the platforms weft
 * runs on, so the default can be generous; `memoryBytes` sets it. Asking for more than remains is a
 * `backend_memory` error that says how much was reserved and how to reserve more.
 *
 * Blocks are 16-byte aligned (one SIMD vector) and start past address 0, which the kernels read as "no array".
 * A block comes back only through `release` (the buffer pool keeps what is given back to it for reuse, so a
 * training loop that repeats the same shapes takes new blocks only in its first step). Batches of many shapes
 * (sequences of every length) leave blocks of many sizes: when the reservation runs out, `whenExhausted` is asked
 * to give back what it holds unused (the training backend empties its pools' free lists), neighbouring free blocks
 * are joined, and the request is served from the smallest free block that holds it (the rest stays free).
 */
import { fail } from '../errors.js';

const PAGE = 65536;
const ALIGN = 16;
const FIRST = 64;
/**
 * Arrays made by a LinearMemory carry, under this key (a non-enumerable property), their memory's number times
 * 2³² plus their byte offset: in Node 20 reading a typed array's `byteOffset` or `buffer` costs 10–15 ns
 * (measured), more than a small kernel computes in, and a streaming step passes some twenty arrays; one property
 * read is about 2 ns. One key for every memory, so all such arrays share one shape and the read stays fast where
 * a program has many memories (with a key per memory the read went megamorphic: a streaming GRU step took 3.3 µs
 * after seven other runtimes had been made, 2.2 µs with one key).
 */
const OFFSET_KEY: unique symbol = Symbol('weft memory offset');
/** 2³²: the byte offsets of one memory (at most 4 GiB) fit below it, and 2⁵³ / 2³² memories can be numbered. */
const SPAN = 4294967296;
let memoriesMade = 0;

export class LinearMemory {
  readonly memory: WebAssembly.Memory;
  readonly buffer: ArrayBuffer;
  readonly reservedBytes: number;
  private top = FIRST;
  private readonly free = new Map<number, number[]>();
  /** This memory's place in the numbering of recorded offsets (see OFFSET_KEY): its number times 2³². */
  private readonly base = memoriesMade++ * SPAN;
  /** Called once when a request does not fit, to give unused blocks back (through `release`) before it fails. */
  whenExhausted: (() => void) | null = null;
  constructor(bytes: number) {
    const pages = Math.ceil(bytes / PAGE);
    this.memory = new WebAssembly.Memory({ initial: pages, maximum: pages });
    this.buffer = this.memory.buffer;
    this.reservedBytes = pages * PAGE;
  }

  /** Bytes handed out so far (the high-water mark of the bump pointer). */
  get usedBytes(): number {
    return this.top;
  }

  /** The byte offset of a fresh block of at least `bytes` bytes. */
  allocate(bytes: number): number {
    const size = Math.max(ALIGN, Math.ceil(bytes / ALIGN) * ALIGN);
    const reuse = this.free.get(size);
    if (reuse !== undefined && reuse.length > 0) return reuse.pop() as number;
    if (this.top + size > this.reservedBytes) {
      this.whenExhausted?.();
      const found = this.joinFree(size);
      if (found >= 0) return found;
      fail(
        'backend_memory',
        'webassembly backend',
        `at most ${this.reservedBytes} bytes of tensors and scratch (the reservation)`,
        `a request for ${size} more bytes with ${this.top} in use`,
        'make the backend with a larger memoryBytes, or give buffers back to their pool',
      );
    }
    const offset = this.top;
    this.top += size;
    return offset;
  }

  /** Gives a block back for reuse by a later request of the same size. */
  release(offset: number, bytes: number): void {
    const size = Math.max(ALIGN, Math.ceil(bytes / ALIGN) * ALIGN);
    const list = this.free.get(size);
    if (list === undefined) this.free.set(size, [offset]);
    else list.push(offset);
  }

  /**
   * Joins neighbouring free blocks (lowering the bump pointer under a free tail), then takes the smallest free block
   * of at least `size` bytes, splitting off the rest; −1 when none holds it.
   */
  private joinFree(size: number): number {
    const blocks: number[][] = [];
    for (const [bytes, offsets] of this.free) for (const offset of offsets) blocks.push([offset, bytes]);
    blocks.sort((a, b) => a[0] - b[0]);
    const joined: number[][] = [];
    for (const block of blocks) {
      const last = joined[joined.length - 1];
      if (last !== undefined && last[0] + last[1] === block[0]) last[1] += block[1];
      else joined.push(block);
    }
    const tail = joined[joined.length - 1];
    if (tail !== undefined && tail[0] + tail[1] === this.top) {
      this.top = tail[0];
      joined.pop();
    }
    this.free.clear();
    let best = -1;
    for (let i = 0; i < joined.length; i++) if (joined[i][1] >= size && (best < 0 || joined[i][1] < joined[best][1])) best = i;
    let offset = -1;
    if (best >= 0) {
      offset = joined[best][0];
      joined[best] = [offset + size, joined[best][1] - size];
    } else if (this.top + size <= this.reservedBytes) {
      offset = this.top;
      this.top += size;
    }
    for (const [at, bytes] of joined) if (bytes > 0) this.release(at, bytes);
    return offset;
  }

  floats(length: number): Float32Array {
    return this.mark(new Float32Array(this.buffer, this.allocate(length * 4), length));
  }

  integers(length: number): Int32Array {
    return this.mark(new Int32Array(this.buffer, this.allocate(length * 4), length));
  }

  /**
   * The byte offset of `array` in this memory, or −1 when it lives elsewhere: the recorded offset for arrays made
   * by floats()/integers(), else (views made otherwise, such as subarrays) read from the view after checking its
   * buffer.
   */
  offsetOf(array: Float32Array | Float64Array | Int32Array): number {
    const known = (array as unknown as { readonly [OFFSET_KEY]?: number })[OFFSET_KEY];
    if (known !== undefined) {
      const offset = known - this.base;
      return offset >= 0 && offset < SPAN ? offset : -1;
    }
    return array.buffer === this.buffer ? array.byteOffset : -1;
  }

  private mark<T extends Float32Array | Int32Array>(array: T): T {
    Object.defineProperty(array, OFFSET_KEY, { value: this.base + array.byteOffset });
    return array;
  }
}
