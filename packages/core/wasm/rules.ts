/**
 * Update rules over one parameter's buffers, twins of the `apply` loops of packages/optim/src/{adam,sgd}.ts.
 * Each element is computed in f64 in the twin's exact order of operations and rounded to f32 once per stored
 * value, as the twin does (JavaScript numbers are f64), so both backends update weights bit for bit alike.
 * Per-call constants (bias corrections, the scheduled rate) are computed by the caller and passed in.
 */

/**
 * Adam (Kingma & Ba 2015, Algorithm 1) with L2 penalty κ and decoupled decay λ; see adam.ts. Two elements per turn
 * in f64x2 lanes: each lane is the scalar arithmetic, operation for operation (IEEE 754 rounds every lane's +, ×, ÷
 * and √ as it rounds the scalar one), so the lanes give the twin's bits.
 */
export function adamUpdate(
  values: usize, gradient: usize, firstMoment: usize, secondMoment: usize, length: i32,
  beta1: f64, beta2: f64, correction1: f64, correction2: f64, rate: f64, decay: f64, kappa: f64, epsilon: f64,
): void {
  const kappa2 = f64x2.splat(kappa);
  const beta1x2 = f64x2.splat(beta1);
  const rest1 = f64x2.splat(1 - beta1);
  const beta2x2 = f64x2.splat(beta2);
  const rest2 = f64x2.splat(1 - beta2);
  const correction1x2 = f64x2.splat(correction1);
  const correction2x2 = f64x2.splat(correction2);
  const rate2 = f64x2.splat(rate);
  const decay2 = f64x2.splat(decay);
  const epsilon2 = f64x2.splat(epsilon);
  let i = 0;
  for (; i + 2 <= length; i += 2) {
    const offset = <usize>i << 2;
    const theta = f64x2.promote_low_f32x4(v128.load64_zero(values + offset));
    const g = f64x2.add(f64x2.promote_low_f32x4(v128.load64_zero(gradient + offset)), f64x2.mul(kappa2, theta));
    const m = f64x2.add(f64x2.mul(beta1x2, f64x2.promote_low_f32x4(v128.load64_zero(firstMoment + offset))), f64x2.mul(rest1, g));
    const v = f64x2.add(f64x2.mul(beta2x2, f64x2.promote_low_f32x4(v128.load64_zero(secondMoment + offset))), f64x2.mul(f64x2.mul(rest2, g), g));
    v128.store64_lane(firstMoment + offset, f32x4.demote_f64x2_zero(m), 0);
    v128.store64_lane(secondMoment + offset, f32x4.demote_f64x2_zero(v), 0);
    const mHat = f64x2.div(m, correction1x2);
    const vHat = f64x2.div(v, correction2x2);
    const step = f64x2.add(f64x2.mul(rate2, f64x2.div(mHat, f64x2.add(f64x2.sqrt(vHat), epsilon2))), f64x2.mul(decay2, theta));
    v128.store64_lane(values + offset, f32x4.demote_f64x2_zero(f64x2.sub(theta, step)), 0);
  }
  for (; i < length; i++) {
    const offset = <usize>i << 2;
    const theta = <f64>load<f32>(values + offset);
    const g = <f64>load<f32>(gradient + offset) + kappa * theta;
    const m = beta1 * <f64>load<f32>(firstMoment + offset) + (1 - beta1) * g;
    const v = beta2 * <f64>load<f32>(secondMoment + offset) + (1 - beta2) * g * g;
    store<f32>(firstMoment + offset, <f32>m);
    store<f32>(secondMoment + offset, <f32>v);
    // The twin stores m and v as f32 and goes on with the f64 values it computed; so does this.
    const mHat = m / correction1;
    const vHat = v / correction2;
    store<f32>(values + offset, <f32>(theta - (rate * (mHat / (Math.sqrt(vHat) + epsilon)) + decay * theta)));
  }
}

/** SGD with momentum μ (Nesterov's form when `nesterov`), L2 penalty κ and decoupled decay λ; see sgd.ts. */
export function sgdUpdate(
  values: usize, gradient: usize, velocity: usize, length: i32, rate: f64, decay: f64, mu: f64, kappa: f64, nesterov: i32,
): void {
  for (let i = 0; i < length; i++) {
    const offset = <usize>i << 2;
    const theta = <f64>load<f32>(values + offset);
    const g = <f64>load<f32>(gradient + offset) + kappa * theta;
    const v = mu * <f64>load<f32>(velocity + offset) + g;
    store<f32>(velocity + offset, <f32>v);
    const direction = nesterov ? g + mu * v : v;
    store<f32>(values + offset, <f32>(theta - (rate * direction + decay * theta)));
  }
}
