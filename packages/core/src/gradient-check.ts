/**
 * Gradient check: compares the tape's reverse-mode gradients with central finite differences,
 *
 *     ∂f/∂x_i ≈ (f(x + h·e_i) − f(x − h·e_i)) / 2h,   error O(h²) (common practice),
 *
 * entry by entry, in f64. The difference has errors of its own: rounding in f(x ± h), about ε·|f|/h times the
 * growth of rounding through the computation (common practice; ε = 2⁻⁵² for f64), and truncation, O(h²). An entry
 * whose relative error |a − n| / max(|a|, |n|) is above `tolerance` can still be right, so each entry passes by the
 * first of these rules that holds, and the report says which:
 * - relative: the relative error is below `tolerance`;
 * - noise: the absolute error is below the difference's rounding noise, NOISE_GROWTH·ε·(|f(x+h)| + |f(x−h)|)/2h,
 *   a bound that scales with the loss and the step;
 * - extrapolated: Richardson extrapolation (Richardson 1911; as numerical analysis texts state it) of the
 *   differences at h and h/2, (4·D(h/2) − D(h))/3, error O(h⁴), agrees within `tolerance`, or within the rounding
 *   noise at h/2;
 * - floor: the absolute error is below `absoluteFloor` (given by the caller; 1e-9 by default).
 * A wrong gradient is off by far more than any of these bounds, and fails. Directional checks (the derivative along
 * a few random unit directions against the dot product with the gradient) take the same rules.
 *
 * Anyone can point it at their own computation: `build` records a scalar on the tape it is given, reading the
 * tensors under test; the check perturbs those tensors' values in place and always puts them back exactly.
 *
 * Why one file of this length: the entry-by-entry and the directional checks share the perturbation, tolerance and
 * report code, and the report's text is the check's output.
 */
import type { FloatArray } from './dtype.js';
import { fail, formatShape } from './errors.js';
import type { Backend } from './backend/backend.js';
import { defaultBackend } from './backend/choose.js';
import { Random } from './random.js';
import { Tape } from './tape.js';
import type { Tensor } from './tensor.js';

/** How `checkGradients` compares reverse-mode gradients with central finite differences. */
export interface GradientCheckOptions {
  /** The backend the computation runs on (the default backend when not given; f64 runs on JavaScript kernels everywhere). */
  readonly backend?: Backend;
  /** The finite-difference step h. Default 1e-5. */
  readonly step?: number;
  /** Largest relative error that passes. Default 1e-6. */
  readonly tolerance?: number;
  /** An absolute error below this passes whatever its relative error (the finite-difference noise floor). Default 1e-9. */
  readonly absoluteFloor?: number;
  /** Check at most this many entries per tensor, picked by the seeded generator. Default: every entry. */
  readonly entriesPerTensor?: number;
  /** Number of random directions for the directional check. Default 3. */
  readonly directions?: number;
  /** Seed for sampling entries and directions. Default 1. */
  readonly seed?: number | string;
}

/** The entry-by-entry comparison for one tensor. */
export interface TensorGradientCheck {
  /** The tensor's name (or its place in the list). */
  readonly name: string;
  /** The tensor's shape. */
  readonly shape: readonly number[];
  /** Entries compared. */
  readonly checked: number;
  /** True when every checked entry passed (by relative error, or by the absolute floor). */
  readonly passed: boolean;
  /** The worst relative error |a − n| / max(|a|, |n|, tiny) among the checked entries. */
  readonly worstRelativeError: number;
  /** Its absolute error |a − n|. */
  readonly worstAbsoluteError: number;
  /** Where: the full index into the tensor, and its row-major offset. */
  readonly worstIndex: readonly number[];
  /** The row-major offset of the worst entry. */
  readonly worstOffset: number;
  /** The reverse-mode value and the finite-difference value there. */
  readonly analytic: number;
  /** The finite-difference value at the worst entry. */
  readonly numeric: number;
  /** Offsets of entries that passed by neither the relative error nor the noise bound nor extrapolation, only the floor. */
  readonly passedByFloor: readonly number[];
  /** Offsets of entries whose relative error failed but whose absolute error was within the difference's rounding noise. */
  readonly passedByNoise: readonly number[];
  /** Offsets of entries that passed only once the difference was extrapolated (Richardson). */
  readonly passedByExtrapolation: readonly number[];
  /** Offsets of entries that failed. */
  readonly failures: readonly number[];
  /** Each failed entry with its index and both values (the worst first, at most MAX_FAILED_SHOWN). */
  readonly failed: readonly FailedEntry[];
}

/** An entry that failed: where, and the two values. */
export interface FailedEntry {
  /** The full index into the tensor. */
  readonly index: readonly number[];
  /** The reverse-mode value. */
  readonly analytic: number;
  /** The finite difference (extrapolated, when it was). */
  readonly numeric: number;
  /** Their relative error. */
  readonly relativeError: number;
}

/** The most failed entries a tensor's report keeps, the worst first. */
export const MAX_FAILED_SHOWN = 100;

/**
 * How far rounding in computing f may grow beyond one unit in the last place of |f|, for the noise bound: a
 * computation of thousands of operations rarely loses more than a few bits, and the bound is checked against the
 * built-in cells at every size the command allows (and a deliberate bug of 1e-4 relative still fails).
 */
export const NOISE_GROWTH = 32;

/** The comparison along one random direction d: the reverse-mode ∇·d against (f(x + hd) − f(x − hd)) / 2h. */
export interface DirectionalGradientCheck {
  /** ∇·d from the reverse sweep. */
  readonly analytic: number;
  /** The central difference along d. */
  readonly numeric: number;
  /** |analytic − numeric| / max(|analytic|, |numeric|). */
  readonly relativeError: number;
  /** True when it passed by one of the rules (see `rule`). */
  readonly passed: boolean;
  /** The rule it passed by, or "failed". */
  readonly rule: PassRule | 'failed';
}

/** The rule an entry passed by (see the file's comment). */
export type PassRule = 'relative' | 'noise' | 'extrapolated' | 'floor';

/** The result of `checkGradients`. */
export interface GradientReport {
  /** True when every tensor and every direction passed. */
  readonly passed: boolean;
  /** The finite-difference step h used. */
  readonly step: number;
  /** The largest relative error that passed. */
  readonly tolerance: number;
  /** The absolute error under which an entry passed whatever its relative error. */
  readonly absoluteFloor: number;
  /** The loss at the unperturbed parameters. */
  readonly loss: number;
  /** One comparison per tensor, in the order given. */
  readonly tensors: readonly TensorGradientCheck[];
  /** The directional comparisons. */
  readonly directions: readonly DirectionalGradientCheck[];
  /** The report as readable lines. */
  text(): string;
}

const TINY = 1e-300;

function relativeError(a: number, n: number): number {
  const d = Math.abs(a - n);
  return d === 0 ? 0 : d / Math.max(Math.abs(a), Math.abs(n), TINY);
}

function indexOf(offset: number, shape: readonly number[]): number[] {
  const index = new Array<number>(shape.length).fill(0);
  let rest = offset;
  for (let axis = shape.length - 1; axis >= 0; axis--) {
    index[axis] = rest % shape[axis];
    rest = Math.floor(rest / shape[axis]);
  }
  return index;
}

/**
 * Checks the reverse-mode gradients of the scalar `build` returns with respect to `tensors` against central finite
 * differences, entry by entry and along random directions (f64 recommended).
 */
export function checkGradients(build: (tape: Tape) => Tensor, tensors: readonly Tensor[], options: GradientCheckOptions = {}): GradientReport {
  const settings = checkSettings(build, options);
  const names = tensors.map((t, i) => (t.name !== '' ? t.name : `tensors[${i}]`));
  tensors.forEach((t, i) => {
    if (t.dtype !== 'f64') {
      fail('dtype_mismatch', `checkGradients.${names[i]}`, 'f64', t.dtype, 'finite differences need f64; build the computation in f64 to check it');
    }
  });

  const random = new Random(options.seed ?? 1);
  // f64 arrays run on the JavaScript kernels on every backend; the backend still matters for f32 tensors a
  // computation reads (its inputs, constants), which must live where the tape computes.
  const backend = options.backend ?? defaultBackend();
  const pool = backend.createPool();
  const tape = new Tape({ backend, pool });

  // Make every tensor under test a parameter for the duration, keeping what it had.
  const before = tensors.map((t) => ({ trainable: t.trainable, tracked: t.tracked, gradient: t.gradient }));
  for (const t of tensors) {
    t.trainable = true;
    t.tracked = true;
    t.gradient = pool.takeZeroed('f64', t.size);
  }

  const evaluate = (where: string): number => {
    tape.clear();
    tape.recording = false;
    const value = scalarOf(build(tape), where);
    tape.clear();
    return value;
  };

  try {
    tape.recording = true;
    const lossTensor = build(tape);
    const loss = scalarOf(lossTensor, 'the unperturbed point');
    if (lossTensor.tracked) tape.reverseSweep(lossTensor);
    const analytic: FloatArray[] = tensors.map((t) => Float64Array.from(t.gradient as FloatArray));
    tape.clear();
    const results = tensors.map((t, ti) => checkEntries(t, names[ti], analytic[ti], settings, evaluate, random));
    const directions: DirectionalGradientCheck[] = [];
    const totalSize = tensors.reduce((n, t) => n + t.size, 0);
    for (let d = 0; d < settings.directions && totalSize > 0; d++) directions.push(checkDirection(d, tensors, analytic, settings, evaluate, random));
    const passed = results.every((r) => r.passed) && directions.every((d) => d.passed);
    const { step, tolerance, absoluteFloor } = settings;
    return makeReport({ passed, step, tolerance, absoluteFloor, loss, tensors: results, directions });
  } finally {
    tape.clear();
    tensors.forEach((t, i) => {
      t.trainable = before[i].trainable;
      t.tracked = before[i].tracked;
      t.gradient = before[i].gradient;
    });
  }
}

/** A check's settings, each checked. */
interface CheckSettings {
  readonly step: number;
  readonly tolerance: number;
  readonly absoluteFloor: number;
  readonly directions: number;
  readonly entriesPerTensor: number;
}

/** The options with their defaults, each refused with a one-line error when it is out of range. */
function checkSettings(build: unknown, options: GradientCheckOptions): CheckSettings {
  const step = options.step ?? 1e-5;
  const tolerance = options.tolerance ?? 1e-6;
  const absoluteFloor = options.absoluteFloor ?? 1e-9;
  const directions = options.directions ?? 3;
  const entriesPerTensor = options.entriesPerTensor ?? Infinity;
  if (!(step > 0) || !Number.isFinite(step)) fail('invalid_option', 'checkGradients.step', 'a finite number > 0', String(step));
  if (!(tolerance > 0)) fail('invalid_option', 'checkGradients.tolerance', 'a number > 0', String(tolerance));
  if (!(absoluteFloor >= 0)) fail('invalid_option', 'checkGradients.absoluteFloor', 'a number ≥ 0', String(absoluteFloor));
  if (!Number.isInteger(directions) || directions < 0) {
    fail('invalid_option', 'checkGradients.directions', 'a whole number ≥ 0', String(directions));
  }
  if (!(entriesPerTensor >= 1)) fail('invalid_option', 'checkGradients.entriesPerTensor', 'a number ≥ 1', String(entriesPerTensor));
  if (typeof build !== 'function') fail('invalid_argument', 'checkGradients.build', 'a function (tape) => scalar tensor', typeof build);
  return { step, tolerance, absoluteFloor, directions, entriesPerTensor };
}

/** One tensor's entries (all, or `entriesPerTensor` drawn at random), each judged against its central difference. */
function checkEntries(
  t: Tensor,
  name: string,
  analytic: FloatArray,
  settings: CheckSettings,
  evaluate: (where: string) => number,
  random: Random,
): TensorGradientCheck {
  const offsets = pickEntries(t.size, settings.entriesPerTensor, random);
  let worst = -1;
  let worstOffset = 0;
  let worstAbsolute = 0;
  let worstAnalytic = 0;
  let worstNumeric = 0;
  const passedByFloor: number[] = [];
  const passedByNoise: number[] = [];
  const passedByExtrapolation: number[] = [];
  const failures: number[] = [];
  const failed: FailedEntry[] = [];
  for (const offset of offsets) {
    const original = t.data[offset];
    // The central difference at step s, and its rounding noise.
    const difference = (s: number): [number, number] => {
      const up = original + s;
      const down = original - s;
      t.data[offset] = up;
      const fUp = evaluate(`${name}[${offset}] + h`);
      t.data[offset] = down;
      const fDown = evaluate(`${name}[${offset}] − h`);
      t.data[offset] = original;
      return [(fUp - fDown) / (up - down), noiseOf(fUp, fDown, up - down)];
    };
    const a = analytic[offset];
    const judged = judge(a, difference, settings.step, settings.tolerance, settings.absoluteFloor);
    const numeric = judged.numeric;
    const rel = relativeError(a, numeric);
    if (judged.rule === 'floor') passedByFloor.push(offset);
    else if (judged.rule === 'noise') passedByNoise.push(offset);
    else if (judged.rule === 'extrapolated') passedByExtrapolation.push(offset);
    else if (judged.rule === 'failed') {
      failures.push(offset);
      failed.push({ index: indexOf(offset, t.shape), analytic: a, numeric, relativeError: rel });
    }
    if (rel > worst) [worst, worstOffset, worstAbsolute, worstAnalytic, worstNumeric] = [rel, offset, Math.abs(a - numeric), a, numeric];
  }
  return {
    name,
    shape: t.shape.slice(),
    checked: offsets.length,
    passed: failures.length === 0,
    worstRelativeError: Math.max(worst, 0),
    worstAbsoluteError: worstAbsolute,
    worstIndex: indexOf(worstOffset, t.shape),
    worstOffset,
    analytic: worstAnalytic,
    numeric: worstNumeric,
    passedByFloor,
    passedByNoise,
    passedByExtrapolation,
    failures,
    failed: failed.sort((x, y) => y.relativeError - x.relativeError).slice(0, MAX_FAILED_SHOWN),
  };
}

/** The directional derivative along random unit direction `d` over every tensor, against its central difference. */
function checkDirection(
  d: number,
  tensors: readonly Tensor[],
  analytic: readonly FloatArray[],
  settings: CheckSettings,
  evaluate: (where: string) => number,
  random: Random,
): DirectionalGradientCheck {
  const totalSize = tensors.reduce((n, t) => n + t.size, 0);
  const direction = new Float64Array(totalSize);
  let norm = 0;
  for (let i = 0; i < totalSize; i++) {
    direction[i] = random.normal();
    norm += direction[i] * direction[i];
  }
  norm = Math.sqrt(norm);
  let expected = 0;
  let offset = 0;
  for (let ti = 0; ti < tensors.length; ti++) {
    for (let i = 0; i < tensors[ti].size; i++) {
      direction[offset + i] /= norm;
      expected += analytic[ti][i] * direction[offset + i];
    }
    offset += tensors[ti].size;
  }
  const originals = tensors.map((t) => Float64Array.from(t.data));
  const move = (s: number): void => {
    let o = 0;
    tensors.forEach((t, ti) => {
      for (let i = 0; i < t.size; i++) t.data[i] = originals[ti][i] + s * direction[o + i];
      o += t.size;
    });
  };
  const difference = (s: number): [number, number] => {
    move(s);
    const fUp = evaluate(`direction ${d} + h`);
    move(-s);
    const fDown = evaluate(`direction ${d} − h`);
    tensors.forEach((t, ti) => t.data.set(originals[ti]));
    return [(fUp - fDown) / (2 * s), noiseOf(fUp, fDown, 2 * s)];
  };
  const judged = judge(expected, difference, settings.step, settings.tolerance, settings.absoluteFloor);
  return {
    analytic: expected,
    numeric: judged.numeric,
    relativeError: relativeError(expected, judged.numeric),
    passed: judged.rule !== 'failed',
    rule: judged.rule,
  };
}

/** The rounding noise of a central difference over `span` from values fUp and fDown (see NOISE_GROWTH). */
function noiseOf(fUp: number, fDown: number, span: number): number {
  return (NOISE_GROWTH * Number.EPSILON * (Math.abs(fUp) + Math.abs(fDown))) / span;
}

/**
 * The rule an entry passes by, trying the cheap ones first: the difference at `step` (relative, then noise), then
 * Richardson's extrapolation with the difference at step/2, then the caller's floor; the value judged last.
 */
function judge(
  a: number,
  difference: (step: number) => [number, number],
  step: number,
  tolerance: number,
  absoluteFloor: number,
): { rule: PassRule | 'failed'; numeric: number } {
  const [d1, noise1] = difference(step);
  if (relativeError(a, d1) < tolerance) return { rule: 'relative', numeric: d1 };
  if (Math.abs(a - d1) < noise1) return { rule: 'noise', numeric: d1 };
  const [d2, noise2] = difference(step / 2);
  const extrapolated = (4 * d2 - d1) / 3;
  if (relativeError(a, extrapolated) < tolerance || Math.abs(a - extrapolated) < noise2) return { rule: 'extrapolated', numeric: extrapolated };
  if (Math.abs(a - d1) < absoluteFloor) return { rule: 'floor', numeric: d1 };
  return { rule: 'failed', numeric: extrapolated };
}

function scalarOf(t: Tensor, where: string): number {
  if (t === null || typeof t !== 'object' || !('data' in t)) {
    fail('invalid_argument', 'checkGradients.build', 'a function returning a tensor', String(t));
  }
  if (t.size !== 1) fail('shape_mismatch', 'checkGradients.build result', 'a scalar (one element)', formatShape(t.shape));
  const value = t.data[0];
  if (!Number.isFinite(value)) fail('not_finite', `checkGradients.build result at ${where}`, 'a finite value', String(value));
  return value;
}

/** Every offset when the tensor is small enough, else `count` distinct offsets drawn by partial Fisher–Yates. */
function pickEntries(size: number, count: number, random: Random): number[] {
  if (size <= count) return Array.from({ length: size }, (_, i) => i);
  const all = Int32Array.from({ length: size }, (_, i) => i);
  const picked: number[] = [];
  for (let i = 0; i < count; i++) {
    const j = i + random.integer(size - i);
    const held = all[i];
    all[i] = all[j];
    all[j] = held;
    picked.push(all[i]);
  }
  return picked.sort((a, b) => a - b);
}

function makeReport(fields: Omit<GradientReport, 'text'>): GradientReport {
  return {
    ...fields,
    text(): string {
      const lines: string[] = [];
      lines.push(
        `gradient check ${fields.passed ? 'PASSED' : 'FAILED'}: h = ${fields.step}, tolerance ${fields.tolerance} relative, floor ${fields.absoluteFloor} absolute, loss ${fields.loss}`,
      );
      for (const r of fields.tensors) {
        const where = `[${r.worstIndex.join(', ')}]`;
        lines.push(
          `  ${r.passed ? 'ok  ' : 'FAIL'} ${r.name} ${formatShape(r.shape)}: ${r.checked} entries, worst relative error ${r.worstRelativeError.toExponential(2)} at ${where} (reverse ${r.analytic}, finite difference ${r.numeric})` +
            (r.passedByNoise.length > 0 ? `; ${r.passedByNoise.length} passed within the difference's rounding noise` : '') +
            (r.passedByExtrapolation.length > 0 ? `; ${r.passedByExtrapolation.length} passed once extrapolated (Richardson)` : '') +
            (r.passedByFloor.length > 0 ? `; ${r.passedByFloor.length} passed only by the absolute floor` : '') +
            (r.failures.length > 0 ? `; ${r.failures.length} failed` : ''),
        );
      }
      fields.directions.forEach((d, i) => {
        lines.push(
          `  ${d.passed ? 'ok  ' : 'FAIL'} direction ${i}: reverse ${d.analytic}, finite difference ${d.numeric}, relative error ${d.relativeError.toExponential(2)}${d.rule === 'relative' || d.rule === 'failed' ? '' : ` (passed by ${d.rule === 'noise' ? 'the rounding noise' : d.rule === 'extrapolated' ? 'extrapolation' : 'the floor'})`}`,
        );
      });
      return lines.join('\n');
    },
  };
}
