"""
The streaming-step reference for `npm run bench`: one batch-1 step of an LSTM and of a GRU with a readout to 8
values, the shapes of bench/runtime.bench.ts, written in numpy on one thread (OPENBLAS_NUM_THREADS=1 and the like,
set before numpy loads). Prints one JSON object, {"step.lstm.i64h256": microseconds, ...}: the best of five
rounds of timed steps after a warm-up, state carried from step to step.

Written to be fast, not literal, so that the comparison is fair to numpy: the weights of x and h stacked into one
matrix (one matrix-vector product per step where the cell allows it), every operation writing into arrays made
once (no allocation per step), and σ(a) computed as 0.5·tanh(0.5·a) + 0.5 over the three sigmoid gates at once
(the same function; gate order i, f, o, g inside this file, which changes no cost).
The equations: the LSTM with forget gate (Gers, Schmidhuber & Cummins 2000) and the GRU of Cho et al. 2014 with
the reset gate applied before the recurrent product, as the ONNX LSTM and GRU operators define them.
"""
import json
import os
import sys
import time

for name in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ[name] = "1"

import numpy as np  # noqa: E402

SHAPES = [(16, 32), (32, 64), (32, 128), (64, 256)]
OUTPUTS = 8


def best_microseconds(step, reps):
    for _ in range(min(reps, 2000)):
        step()
    best = float("inf")
    for _ in range(5):
        started = time.perf_counter()
        for _ in range(reps):
            step()
        best = min(best, (time.perf_counter() - started) / reps * 1e6)
    return best


def lstm_step(inputs, hidden, rng):
    weights = rng.uniform(-0.1, 0.1, (inputs + hidden, 4 * hidden)).astype(np.float32)
    bias = np.zeros(4 * hidden, np.float32)
    readout = rng.uniform(-0.1, 0.1, (hidden, OUTPUTS)).astype(np.float32)
    readout_bias = np.zeros(OUTPUTS, np.float32)
    x = rng.uniform(-1, 1, inputs).astype(np.float32)
    xh = np.zeros(inputs + hidden, np.float32)
    h = xh[inputs:]
    c = np.zeros(hidden, np.float32)
    a = np.empty(4 * hidden, np.float32)
    t = np.empty(hidden, np.float32)
    y = np.empty(OUTPUTS, np.float32)
    sig = a[: 3 * hidden]
    i, f, o, g = a[:hidden], a[hidden : 2 * hidden], a[2 * hidden : 3 * hidden], a[3 * hidden :]

    def step():
        xh[:inputs] = x
        np.dot(xh, weights, out=a)
        np.add(a, bias, out=a)
        np.multiply(sig, 0.5, out=sig)
        np.tanh(sig, out=sig)
        np.multiply(sig, 0.5, out=sig)
        np.add(sig, 0.5, out=sig)
        np.tanh(g, out=g)
        np.multiply(f, c, out=c)
        np.multiply(i, g, out=t)
        np.add(c, t, out=c)
        np.tanh(c, out=t)
        np.multiply(o, t, out=h)
        np.dot(h, readout, out=y)
        np.add(y, readout_bias, out=y)

    return step


def gru_step(inputs, hidden, rng):
    w_input = rng.uniform(-0.1, 0.1, (inputs, 3 * hidden)).astype(np.float32)
    w_gates = rng.uniform(-0.1, 0.1, (hidden, 2 * hidden)).astype(np.float32)
    w_candidate = rng.uniform(-0.1, 0.1, (hidden, hidden)).astype(np.float32)
    bias = np.zeros(3 * hidden, np.float32)
    readout = rng.uniform(-0.1, 0.1, (hidden, OUTPUTS)).astype(np.float32)
    readout_bias = np.zeros(OUTPUTS, np.float32)
    x = rng.uniform(-1, 1, inputs).astype(np.float32)
    h = np.zeros(hidden, np.float32)
    projected = np.empty(3 * hidden, np.float32)
    gates = np.empty(2 * hidden, np.float32)
    reset_h = np.empty(hidden, np.float32)
    n = np.empty(hidden, np.float32)
    y = np.empty(OUTPUTS, np.float32)
    zr = projected[: 2 * hidden]
    z, r, candidate = projected[:hidden], projected[hidden : 2 * hidden], projected[2 * hidden :]

    def step():
        np.dot(x, w_input, out=projected)
        np.add(projected, bias, out=projected)
        np.dot(h, w_gates, out=gates)
        np.add(zr, gates, out=zr)
        np.multiply(zr, 0.5, out=zr)
        np.tanh(zr, out=zr)
        np.multiply(zr, 0.5, out=zr)
        np.add(zr, 0.5, out=zr)
        np.multiply(r, h, out=reset_h)
        np.dot(reset_h, w_candidate, out=n)
        np.add(n, candidate, out=n)
        np.tanh(n, out=n)
        # h = n + z ⊙ (h − n)
        np.subtract(h, n, out=h)
        np.multiply(z, h, out=h)
        np.add(h, n, out=h)
        np.dot(h, readout, out=y)
        np.add(y, readout_bias, out=y)

    return step


def main():
    rng = np.random.default_rng(1)
    results = {}
    for inputs, hidden in SHAPES:
        reps = 20000 if hidden >= 128 else 50000
        results[f"step.lstm.i{inputs}h{hidden}"] = best_microseconds(lstm_step(inputs, hidden, rng), reps)
        results[f"step.gru.i{inputs}h{hidden}"] = best_microseconds(gru_step(inputs, hidden, rng), reps)
    results["numpy"] = np.__version__
    json.dump(results, sys.stdout)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
