import { backendOf } from '@weft/core';
import type { Tensor } from '@weft/core';

/**
 * The tensors of one batch at a time. A source keeps what it handed out and gives the buffers back to their pool
 * when it makes the next batch, so a long run reuses the same few buffers instead of taking new ones each step. On
 * the WebAssembly backend this is what keeps a run within its memory reservation: blocks of a WebAssembly memory
 * are not reclaimed by the garbage collector, only by being given back.
 */
export class BatchBuffers {
  private issued: Tensor[] = [];

  /** Gives the previous batch's buffers back; call before making the next batch. */
  recycle(): void {
    for (const t of this.issued) backendOf(t.data).pool.give(t.data);
    this.issued = [];
  }

  keep(t: Tensor): Tensor {
    this.issued.push(t);
    return t;
  }
}
