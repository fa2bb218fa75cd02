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

/**
 * What a node needs to run backward. One static object per operation kind; nodes point at it. `Saved` is the
 * kind's own record of what its backward reads (inputs, saved buffers, numbers, switches), with a named field for
 * each: `saves()` makes an empty one, the forward fills it in through the record `Tape.record` returns, and
 * `backward` reads it back from `node.saved`.
 */
export interface OperationKind<Saved extends object = object> {
  /** The operation's name, in messages (`matmul`). */
  readonly name: string;
  /**
   * A new, empty record of what this kind saves. A tape calls it the first time a node position holds this kind
   * and reuses the record afterwards, so recording the same graph again allocates nothing. Tensor fields start as
   * `noTensor`.
   */
  saves(): Saved;
  /**
   * Adds the gradient of the node's output (`node.output.gradient`) into its tracked inputs' gradients. Called
   * only when some output has a gradient; a node with two outputs must allow for either gradient being null.
   */
  backward(node: TapeNode<Saved>, tape: Tape): void;
}

/** The stand-in for a tensor field of a saved record that nothing has filled yet: no elements, never tracked, frozen. */
export const noTensor: Tensor = Object.freeze(new Tensor(new Float64Array(0), [0]));

/**
 * One recorded operation: its kind, its output (two for a cell step's h and c) and the kind's saved record. Records
 * are kept per kind and reused when the tape records again.
 */
export class TapeNode<Saved extends object = object> {
  /** The operation recorded; null while the node is free. */
  kind: OperationKind<Saved> | null = null;
  /** The operation's output (`noTensor` while the node is free). */
  output: Tensor = noTensor;
  /** A second output, for operations that produce two tensors (a cell step's h and c). */
  secondOutput: Tensor | null = null;
  /** What the kind saved for backward, by name (see each kind's record type). */
  saved: Saved = null as unknown as Saved;
  /** One record per kind this node position has held, reused. */
  readonly records = new Map<OperationKind<never>, object>();
  /** The kind this position held last and its record: the lookup a repeated graph takes, without the map. */
  lastKind: OperationKind | null = null;
  /** The record of `lastKind`. */
  lastSaved: object | null = null;

  /** Frees the node: kind and outputs are forgotten; the kind's record stays for reuse, overwritten when next filled. */
  reset(): void {
    this.kind = null;
    this.output = noTensor;
    this.secondOutput = null;
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
        fail(
          'backend_mismatch',
          'Tape.pool',
          `a pool of the ${this.backend.name} backend (backend.createPool())`,
          'a pool whose buffers live elsewhere',
          'pass { backend, pool: backend.createPool() } together, or leave out the pool',
        );
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

  /**
   * Records a node for `output` (and `secondOutput`, for operations with two) if it is tracked, and returns the
   * kind's record for the forward to fill in with what backward needs; null when nothing is recorded.
   */
  record<Saved extends object>(kind: OperationKind<Saved>, output: Tensor, secondOutput: Tensor | null = null): Saved | null {
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
    // The same graph recorded again puts the same kind at the same position: its record is the last one used here.
    let saved = (node.lastKind === kind ? node.lastSaved : node.records.get(kind as OperationKind<never>)) as Saved | undefined;
    if (saved === undefined) {
      if (typeof kind.saves !== 'function') {
        fail(
          'invalid_argument',
          `${kind.name}.saves`,
          'a function that makes the record of what backward reads (see OperationKind)',
          typeof kind.saves,
          'an operation kind now keeps what backward needs in named fields: give it saves() and fill the record tape.record returns',
        );
      }
      saved = kind.saves();
      node.records.set(kind as OperationKind<never>, saved);
    }
    node.kind = kind as unknown as OperationKind;
    node.lastKind = kind as unknown as OperationKind;
    node.lastSaved = saved;
    node.output = output;
    node.secondOutput = secondOutput;
    node.saved = saved;
    return saved;
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
      fail(
        'tape_state',
        'Tape.reverseSweep.output',
        'a tensor that depends on a trainable tensor',
        `untracked ${output.label()}`,
        'nothing recorded on this tape leads to it; mark parameters with trainable() and keep recording on',
      );
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
      const second = node.secondOutput;
      if (node.output.gradient === null && (second === null || second.gradient === null)) continue;
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
