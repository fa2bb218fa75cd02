/**
 * Update rules over one parameter's buffers, twins of the `apply` loops of packages/optim/src/{adam,sgd}.ts.
 * Each element is computed in f64 in the twin's exact order of operations and rounded to f32 once per stored
 * value, as the twin does (JavaScript numbers are f64), so both backends update weights bit for bit alike.
 * Per-call constants (bias corrections, the scheduled rate) are computed by the caller and passed in.
 */

/** Adam (Kingma & Ba 2015, Algorithm 1) with L2 penalty κ and decoupled decay λ; see adam.ts. */
export function adamUpdate(
  values: usize, gradient: usize, firstMoment: usize, secondMoment: usize, length: i32,
  beta1: f64, beta2: f64, correction1: f64, correction2: f64, rate: f64, decay: f64, kappa: f64, epsilon: f64,
): void {
  for (let i = 0; i < length; i++) {
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
