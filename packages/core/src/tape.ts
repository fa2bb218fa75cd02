/**
 * The tape records one node per tensor operation while a computation runs forward, then walks the nodes in
 * reverse (the reverse sweep) so that each node adds its inputs' share of the gradient (reverse-mode automatic
 * differentiation; Griewank & Walther, "Evaluating Derivatives", 2nd ed. 2008, ch. 3).
 *
 * Memory: every buffer an operation needs (its output, its saved values, intermediate gradients) is taken from
 * the tape's pool and listed as owned by the tape; `clear()` gives them all back and keeps the node records, so a
 * loop that records the same graph again reuses the same arrays and the same records. Tensors made on a tape are
 * valid until the tape is cleared; copy anything that must outlive it with `keep`.
 *
 * Parameters (trainable tensors) own their gradient buffers; the sweep adds into them and never clears them.
 */
import type { DType, FloatArray } from './dtype.js';
import { fail, formatShape } from './errors.js';
import type { Backend } from './backend/backend.js';
import { defaultBackend } from './backend/choose.js';
import type { KernelTable } from './backend/kernel-table.js';
import type { BufferPool } from './pool.js';
import { Tensor, sameShape, sizeOfShape } from './tensor.js';

/** What a node needs to run backward. One static object per operation kind; nodes point at it. */
export interface OperationKind {
  /** The operation's name, in messages (`matmul`). */
  readonly name: string;
  /**
   * Adds the gradient of the node's output (`node.output.gradient`) into its tracked inputs' gradients. Called
   * only when some output has a gradient; a node with two outputs must allow for either gradient being null.
   */
  backward(node: TapeNode, tape: Tape): void;
}

/**
 * One recorded operation. The fields are generic slots so that records can be reused for any kind: up to three
 * tensor inputs (or a list), saved buffers, integer data and numbers, as each kind documents.
 */
export class TapeNode {
  /** The operation recorded; null while the record is free. */
  kind: OperationKind | null = null;
  /** The operation's output. */
  output: Tensor | null = null;
  /** A second output, for operations that produce two tensors (a cell step's h and c). */
  secondOutput: Tensor | null = null;
  /** The first tensor input. */
  first: Tensor | null = null;
  /** The second tensor input, when there is one. */
  second: Tensor | null = null;
  /** The third tensor input, when there is one. */
  third: Tensor | null = null;
  /** The inputs of an operation with any number of them (concatenation). */
  list: readonly Tensor[] | null = null;
  /** A buffer the forward pass saved for the backward pass (what each kind saves is documented with it). */
  saved: FloatArray | null = null;
  /** A second saved buffer. */
  savedOther: FloatArray | null = null;
  /** A third saved buffer. */
  savedExtra: FloatArray | null = null;
  /** Integer data the operation needs backward (indices, lengths). */
  integers: Int32Array | null = null;
  /** A number the operation needs backward (a scale, a step index: per kind). */
  number0 = 0;
  /** A second number the operation needs backward. */
  number1 = 0;
  /** A switch the operation needs backward (per kind). */
  flag0 = false;
  /** A second switch the operation needs backward. */
  flag1 = false;

  /** Clears the slots so a reused record keeps nothing alive. */
  reset(): void {
    this.kind = null;
    this.output = null;
    this.secondOutput = null;
    this.first = null;
    this.second = null;
    this.third = null;
    this.list = null;
    this.saved = null;
    this.savedOther = null;
    this.savedExtra = null;
    this.integers = null;
    this.number0 = 0;
    this.number1 = 0;
    this.flag0 = false;
    this.flag1 = false;
  }
}

/** How a `Tape` is made. */
export interface TapeOptions {
  /** The kernels and memory every operation on this tape computes with (the default backend when not given). */
  readonly backend?: Backend;
  /** Where buffers come from (the backend's pool by default). */
  readonly pool?: BufferPool;
  /** When false, operations compute but record nothing (inference). Default true. */
  readonly recording?: boolean;
}

/**
 * Records operations as they run so that `reverseSweep` can add each gradient into its inputs, newest first; buffers
 * come from the tape's pool and go back on `clear()`.
 */
export class Tape {
  /** The backend every operation on this tape computes on. */
  readonly backend: Backend;
  /** The backend's kernel table, the one way operations on this tape reach a kernel. */
  readonly kernels: KernelTable;
  /** Where the tape takes its buffers from. */
  readonly pool: BufferPool;
  /** When false, operations compute but record nothing and their outputs are not tracked. */
  recording: boolean;
  private readonly nodes: TapeNode[] = [];
  private nodeCount = 0;
  private readonly owned: FloatArray[] = [];
  private ownedCount = 0;
  private readonly gradientHolders: Tensor[] = [];
  private holderCount = 0;
  private swept = false;

  constructor(options: TapeOptions = {}) {
    this.backend = options.backend ?? defaultBackend();
    this.kernels = this.backend.kernels;
    this.pool = options.pool ?? this.backend.pool;
    if (options.pool !== undefined) {
      // A pool hands out memory of one backend; check it is this tape's before any operation meets it.
      const probe = this.pool.take('f32', 1);
      this.pool.give(probe);
      if (!this.backend.holds(probe)) {
        fail('backend_mismatch', 'Tape.pool', `a pool of the ${this.backend.name} backend (backend.createPool())`, 'a pool whose buffers live elsewhere',
          'pass { backend, pool: backend.createPool() } together, or leave out the pool');
      }
    }
    this.recording = options.recording ?? true;
  }

  /** Number of nodes recorded since the last clear. */
  get length(): number {
    return this.nodeCount;
  }

  /** The kind names of the recorded nodes, in order (for inspection and tests). */
  kinds(): string[] {
    const names: string[] = [];
    for (let i = 0; i < this.nodeCount; i++) names.push(this.nodes[i].kind?.name ?? '?');
    return names;
  }

  /** A buffer owned by the tape until `clear()`. Contents are arbitrary. */
  buffer(dtype: DType, length: number): FloatArray {
    const array = this.pool.take(dtype, length);
    this.own(array);
    return array;
  }

  /**
   * A fresh output tensor for an operation, its buffer owned by the tape. It is tracked when the tape records
   * and `tracked` says a gradient can reach it.
   */
  output(shape: readonly number[], dtype: DType, tracked: boolean): Tensor {
    const size = sizeOfShape(shape, 'Tape.output.shape');
    const t = new Tensor(this.buffer(dtype, size), shape);
    t.tracked = tracked && this.recording;
    return t;
  }

  /** Records a node for `output` if it is tracked; returns the record (for the kind's saved slots) or null. */
  record(kind: OperationKind, output: Tensor, first: Tensor | null, second: Tensor | null = null, third: Tensor | null = null): TapeNode | null {
    if (!output.tracked) return null;
    if (this.swept) {
      fail('tape_state', `${kind.name}`, 'a cleared tape before recording again', 'a tape that has been swept');
    }
    let node = this.nodes[this.nodeCount];
    if (node === undefined) {
      node = new TapeNode();
      this.nodes.push(node);
    }
    this.nodeCount++;
    node.kind = kind;
    node.output = output;
    node.first = first;
    node.second = second;
    node.third = third;
    return node;
  }

  /**
   * The gradient buffer of `t`, created zeroed (and owned by the tape) if it has none yet. Parameters already
   * own theirs. Operations call this in backward for each tracked input.
   */
  gradientOf(t: Tensor): FloatArray {
    if (t.gradient === null) {
      const g = this.pool.takeZeroed(t.dtype, t.size);
      this.own(g);
      t.gradient = g;
      if (this.holderCount < this.gradientHolders.length) this.gradientHolders[this.holderCount] = t;
      else this.gradientHolders.push(t);
      this.holderCount++;
    }
    return t.gradient;
  }

  /**
   * The reverse sweep. With a scalar `output` and no gradient, starts from ∂output/∂output = 1; otherwise
   * starts from `outputGradient` (same size as `output`), which gives the vector–Jacobian product. Adds into the
   * gradient of every tracked tensor, parameters included. A tape can be swept once; clear it to record again.
   */
  reverseSweep(output: Tensor, outputGradient?: FloatArray | Tensor): void {
    if (this.swept) fail('tape_state', 'Tape.reverseSweep', 'a tape recorded since the last clear', 'a tape already swept');
    if (!output.tracked) {
      fail('tape_state', 'Tape.reverseSweep.output', 'a tensor that depends on a trainable tensor', `untracked ${output.label()}`,
        'nothing recorded on this tape leads to it; mark parameters with trainable() and keep recording on');
    }
    const seed = this.gradientOf(output);
    if (outputGradient === undefined) {
      if (output.size !== 1) {
        fail('shape_mismatch', 'Tape.reverseSweep.output', 'a scalar (one element) when no output gradient is given', formatShape(output.shape));
      }
      seed[0] += 1;
    } else {
      const values = outputGradient instanceof Tensor ? outputGradient.data : outputGradient;
      if (outputGradient instanceof Tensor && !sameShape(outputGradient.shape, output.shape)) {
        fail('shape_mismatch', 'Tape.reverseSweep.outputGradient', formatShape(output.shape), formatShape(outputGradient.shape));
      }
      if (values.length !== output.size) {
        fail('shape_mismatch', 'Tape.reverseSweep.outputGradient', `${output.size} elements`, `${values.length}`);
      }
      for (let i = 0; i < values.length; i++) seed[i] += values[i];
    }
    this.swept = true;
    for (let i = this.nodeCount - 1; i >= 0; i--) {
      const node = this.nodes[i];
      const out = node.output as Tensor;
      const second = node.secondOutput;
      if (out.gradient === null && (second === null || second.gradient === null)) continue;
      (node.kind as OperationKind).backward(node, this);
    }
  }

  /**
   * Gives every owned buffer back to the pool, forgets the nodes (keeping their records for reuse) and the
   * intermediate gradients. Parameters keep their values and gradients.
   */
  clear(): void {
    for (let i = 0; i < this.holderCount; i++) {
      const t = this.gradientHolders[i];
      if (!t.trainable) t.gradient = null;
      this.gradientHolders[i] = undefined as unknown as Tensor;
    }
    this.holderCount = 0;
    for (let i = 0; i < this.nodeCount; i++) this.nodes[i].reset();
    this.nodeCount = 0;
    for (let i = 0; i < this.ownedCount; i++) {
      this.pool.give(this.owned[i]);
      this.owned[i] = undefined as unknown as FloatArray;
    }
    this.ownedCount = 0;
    this.swept = false;
  }

  /**
   * A copy of `t`'s values that is not tracked and does not belong to the tape (it survives `clear()`): the way
   * to carry state across truncation windows. Writes into `into` when given (same shape and dtype), else into a
   * new tensor from the pool.
   */
  keep(t: Tensor, into?: Tensor): Tensor {
    if (into === undefined) {
      const copy = new Tensor(this.pool.take(t.dtype, t.size), t.shape.slice());
      copy.data.set(t.data);
      return copy;
    }
    if (!sameShape(into.shape, t.shape)) fail('shape_mismatch', 'Tape.keep.into', formatShape(t.shape), formatShape(into.shape));
    if (into.dtype !== t.dtype) fail('dtype_mismatch', 'Tape.keep.into', t.dtype, into.dtype);
    into.data.set(t.data);
    return into;
  }

  private own(array: FloatArray): void {
    if (this.ownedCount < this.owned.length) this.owned[this.ownedCount] = array;
    else this.owned.push(array);
    this.ownedCount++;
  }
}
