/**
 * A built-in plan's step in the runtime, both ways it runs there, against the ONNX operator's equations
 * (../onnx-equations.ts, a plain f64 implementation written from the specification): the traced program (the plan
 * filed under a kind of its own, so the runtime cannot take the whole-layer kernel) and the whole-layer kernel.
 * Used by lstm.test.ts, gru.test.ts and plain.test.ts.
 */
import { expect, it } from 'vitest';
import { javascriptForward } from '@weft/core/forward';
import { runtimeCell } from '@weft/cells/description';
import type { CellPlan, LayerDescription } from '@weft/cells/description';
import { setup } from '../onnx-seeded.js';
import type { OnnxKind } from '../onnx-seeded.js';

export function checkPlanAgainstOnnx(kind: OnnxKind, plan: CellPlan, layer: LayerDescription): void {
  const lengths = [6, 3, 1, 0, 5];
  for (const route of ['traced program', 'whole-layer kernel'] as const) {
    it(`runs the ${kind} plan's step in the runtime (${route}) as the ONNX equations, ragged lengths ${lengths.join(', ')}, f32 within 1e-5`, () => {
      const { spec, cell, run } = setup(kind, `${kind}-plan`, 6, 5, 3, 4);
      const expected = run({ ...spec, lengths });
      const byName = new Map(
        cell('f32')
          .parameters()
          .map((p) => [`cell.${p.name}`, p.tensor.data]),
      );
      const asked: string[] = [];
      const runAs = route === 'traced program' ? { ...plan, kind: `test.${plan.kind}` } : plan;
      const made = runtimeCell(
        runAs,
        { inputWidth: 3, hidden: 4, layer },
        'cell',
        (name, shape, matrix) => {
          asked.push(name);
          const values = byName.get(name)!;
          return matrix === true ? javascriptForward.matrix(values, shape[0], shape[1]) : Float32Array.from(values);
        },
        javascriptForward.kernels,
      );
      expect(asked.sort()).toEqual([...byName.keys()].sort());
      const buffers = made.buffers(5, (n) => new Float32Array(n));
      buffers.state[0].set(spec.h0!.flat());
      if (spec.c0 !== undefined) buffers.state[1].set(spec.c0.flat());
      let worst = 0;
      spec.x.forEach((rows, t) => {
        made.step(Float32Array.from(rows.flat()), buffers, 5, Int32Array.from(lengths), t);
        for (let b = 0; b < 5; b++) {
          if (t >= lengths[b]) continue;
          for (let j = 0; j < 4; j++) worst = Math.max(worst, Math.abs(buffers.state[0][b * 4 + j] - expected.y[t][b][j]));
        }
      });
      const finals = expected.yh.flat();
      for (let i = 0; i < finals.length; i++) worst = Math.max(worst, Math.abs(buffers.state[0][i] - finals[i]));
      if (expected.yc !== undefined) {
        const cells = expected.yc.flat();
        for (let i = 0; i < cells.length; i++) worst = Math.max(worst, Math.abs(buffers.state[1][i] - cells[i]));
      }
      expect(worst).toBeLessThan(1e-5);
    });
  }
}
