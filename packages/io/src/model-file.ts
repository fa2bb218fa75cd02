/**
 * Between models and weight files: the tensors of a built model by their stable names, and a model built from a
 * weight file with every tensor checked against the shape its description implies (all problems collected).
 */
import { WeftError, fail } from '@weft/core';
import type { DType, Problem } from '@weft/core';
import { EncoderDecoderModel, buildModel, isEncoderDecoder, parameterLayout } from '@weft/cells';
import { layoutProblems } from './layout-check.js';
import { checkMetadata } from './metadata.js';
import type { AnyModelDescription, BuildOptions, NamedParameter, SequenceModel } from '@weft/cells';
import type { NamedValues, WeightFile } from './weight-file.js';

/** A model a weight file can be written from: its description and its named parameters (either kind of model). */
export interface SavedModel {
  /** The model's description. */
  readonly description: AnyModelDescription;
  /** Its parameters by their stable names. */
  parameters(): readonly NamedParameter[];
}

/** The tensors of any model with named parameters (a SequenceModel or an EncoderDecoderModel). */
export function modelTensors(model: { parameters(): readonly NamedParameter[] }): NamedValues[] {
  return model.parameters().map((p) => ({ name: p.name, shape: p.tensor.shape, values: p.tensor.data }));
}

/** How a model is built from a weight file. */
export interface LoadOptions {
  /** Element type to build the model in; default `f32`. */
  readonly dtype?: DType;
  /** Makers of the file's cells that are not built in, by their kind (training only). */
  readonly cells?: BuildOptions['cells'];
  /** Plans of the file's cells that are not built in, by their kind (the file's tensors are checked against them). */
  readonly plans?: BuildOptions['plans'];
}

/** A model with the weight file's values (computing in `dtype`, f32 by default). */
export function loadModel(file: WeightFile, options: LoadOptions = {}): SequenceModel {
  if (isEncoderDecoder(file.model)) {
    fail('bad_weight_file', 'model.kind', 'a sequence model (use loadEncoderDecoder for this file)', '"encoder-decoder"');
  }
  checkBeforeBuilding(file, options);
  return fill(buildModel(file.model, { dtype: options.dtype ?? 'f32', cells: options.cells, plans: options.plans }), file);
}

/** With a plan for every cell, the file is checked against its layout before any model is built from it. */
function checkBeforeBuilding(file: WeightFile, options: LoadOptions): void {
  checkMetadata(file);
  const layout = parameterLayout(file.model, options.plans);
  if (!layout.builtIn) return;
  const problems = layoutProblems(file.tensors, layout.parameters);
  if (problems.length > 0) throw new WeftError(problems);
}

/** An encoder-decoder model with the weight file's values. */
export function loadEncoderDecoder(file: WeightFile, options: LoadOptions = {}): EncoderDecoderModel {
  checkBeforeBuilding(file, options);
  return fill(new EncoderDecoderModel(file.model, { dtype: options.dtype ?? 'f32', cells: options.cells, plans: options.plans }), file);
}

function fill<M extends { parameters(): readonly NamedParameter[] }>(model: M, file: WeightFile): M {
  const byName = new Map(file.tensors.map((t) => [t.name, t]));
  const problems: Problem[] = [];
  for (const p of model.parameters()) {
    const stored = byName.get(p.name);
    if (stored === undefined) {
      problems.push({
        code: 'bad_weight_file',
        path: `tensors (${p.name})`,
        expected: `a tensor named ${p.name}, shape [${p.tensor.shape.join(', ')}]`,
        received: 'none',
      });
      continue;
    }
    byName.delete(p.name);
    if (stored.shape.join(',') !== p.tensor.shape.join(',')) {
      problems.push({
        code: 'bad_weight_file',
        path: `tensors (${p.name}).shape`,
        expected: `[${p.tensor.shape.join(', ')}] (from the model description)`,
        received: `[${stored.shape.join(', ')}]`,
      });
      continue;
    }
    p.tensor.data.set(stored.values);
  }
  for (const name of byName.keys())
    problems.push({ code: 'bad_weight_file', path: `tensors (${name})`, expected: 'only tensors the model description names', received: name });
  if (problems.length > 0) throw new WeftError(problems);
  return model;
}
