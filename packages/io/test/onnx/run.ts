/**
 * Runs an imported model (a weft SequenceModel) on tensors fed as the ONNX graph would be fed, and arranges its
 * outputs as the graph's outputs (Y in its layout, Y_h and Y_c), using the binding the import recorded.
 */
import { Tape, tensor } from '@weft/core';
import { layerDirections } from '@weft/cells/internal';
import type { SequenceModel } from '@weft/cells';
import type { OnnxBinding, OnnxTensor } from '@weft/io/onnx';

export function runAsOnnx(model: SequenceModel, binding: OnnxBinding, feeds: Readonly<Record<string, OnnxTensor>>): Record<string, number[]> {
  const fed = feeds[binding.input.name];
  const [a, b] = fed.dims;
  const [steps, batch] = binding.layout === 0 ? [a, b] : [b, a];
  const values = Array.from(fed.values as ArrayLike<number>);
  // Time-major [steps, batch, …] from either layout.
  const width = fed.dims[2] ?? 1;
  const timeMajor = new Array<number>(values.length);
  for (let t = 0; t < steps; t++) {
    for (let r = 0; r < batch; r++) {
      const from = binding.layout === 0 ? (t * batch + r) * width : (r * steps + t) * width;
      for (let k = 0; k < width; k++) timeMajor[(t * batch + r) * width + k] = values[from + k];
    }
  }
  const input =
    binding.input.kind === 'tokens' ? { tokens: Int32Array.from(timeMajor), steps, batch } : tensor(Float32Array.from(timeMajor), [steps, batch, width]);
  const lengths = binding.lengths === null ? null : Int32Array.from(feeds[binding.lengths].values as ArrayLike<number>);
  const layers = model.description.layers;
  const initialState = binding.initialState.some((s) => s.h !== null || s.c !== null)
    ? model.stateSlots().map((slot) => {
        const match = /^layers\[(\d+)\]\.(forward|backward)\.(h|c)$/.exec(slot.path)!;
        const layer = Number(match[1]);
        // The direction's place among the layer's cells: a reverse layer's one cell is direction 0 in ONNX.
        const direction = layerDirections(layers[layer]).indexOf(match[2] as 'forward' | 'backward');
        const name = binding.initialState[layer][match[3] as 'h' | 'c'];
        const directions = layers[layer].bidirectional === true ? 2 : 1;
        const hidden = layers[layer].hidden;
        const out = new Float32Array(batch * hidden);
        if (name !== null) {
          const given = feeds[name].values as ArrayLike<number>;
          for (let r = 0; r < batch; r++) {
            for (let j = 0; j < hidden; j++) {
              out[r * hidden + j] = binding.layout === 0 ? given[(direction * batch + r) * hidden + j] : given[(r * directions + direction) * hidden + j];
            }
          }
        }
        return tensor(out, [batch, hidden]);
      })
    : undefined;
  const run = model.run(new Tape({ recording: false }), input, { lengths, initialState });
  const results: Record<string, number[]> = {};
  const features = run.outputs.shape[2];
  if (binding.output.name !== '') {
    const axes = binding.output.axes;
    const last = layers[layers.length - 1];
    const hidden = last.hidden;
    const sizes: Record<string, number> = { t: steps, b: batch, d: last.bidirectional === true ? 2 : 1, h: hidden, f: features, v: features };
    const dims = axes.map((l) => sizes[l]);
    const total = dims.reduce((n, d) => n * d, 1);
    const out = new Array<number>(total);
    for (let i = 0; i < total; i++) {
      let rest = i;
      const at: Record<string, number> = {};
      for (let k = axes.length - 1; k >= 0; k--) {
        at[axes[k]] = rest % dims[k];
        rest = Math.floor(rest / dims[k]);
      }
      const feature = at.f ?? at.v ?? (at.d ?? 0) * hidden + at.h;
      out[i] = run.outputs.data[(at.t * batch + at.b) * features + feature];
    }
    results[binding.output.name] = out;
  }
  // Final states of the last layer: [directions, batch, hidden] (layout 0) or [batch, directions, hidden].
  const lastIndex = layers.length - 1;
  const slots = model.stateSlots();
  for (const which of ['h', 'c'] as const) {
    const name = binding.states[lastIndex][which];
    if (name === null) continue;
    const mine = slots.map((s, k) => [s, k] as const).filter(([s]) => s.path.startsWith(`layers[${lastIndex}].`) && s.path.endsWith(`.${which}`));
    const hidden = layers[lastIndex].hidden;
    const out = new Array<number>(mine.length * batch * hidden);
    mine.forEach(([, k], direction) => {
      const data = run.state[k].data;
      for (let r = 0; r < batch; r++) {
        for (let j = 0; j < hidden; j++)
          out[binding.layout === 0 ? (direction * batch + r) * hidden + j : (r * mine.length + direction) * hidden + j] = data[r * hidden + j];
      }
    });
    results[name] = out;
  }
  return results;
}
