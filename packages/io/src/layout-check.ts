/**
 * A weight file's tensors against the layout its description implies (@weft/cells' parameterLayout): every missing
 * tensor, wrong shape and stray tensor, collected, before anything is allocated or built from the file.
 */
import type { Problem } from '@weft/core/base';
import type { ParameterLayout } from '@weft/cells/description';

export interface NamedShape {
  readonly name: string;
  readonly shape: readonly number[];
}

/**
 * The problems of a file's tensors against the layout its description implies (missing, extra, misshapen); empty when
 * they match.
 */
export function layoutProblems(tensors: readonly NamedShape[], layout: readonly ParameterLayout[]): Problem[] {
  const byName = new Map<string, NamedShape>();
  for (const t of tensors) byName.set(t.name, t);
  const problems: Problem[] = [];
  for (const p of layout) {
    const stored = byName.get(p.name);
    if (stored === undefined) {
      problems.push({
        code: 'bad_weight_file',
        path: `tensors (${p.name})`,
        expected: `a tensor named ${p.name}, shape [${p.shape.join(', ')}]`,
        received: 'none',
      });
      continue;
    }
    byName.delete(p.name);
    if (stored.shape.join(',') !== p.shape.join(',')) {
      problems.push({
        code: 'bad_weight_file',
        path: `tensors (${p.name}).shape`,
        expected: `[${p.shape.join(', ')}] (from the model description)`,
        received: `[${stored.shape.join(', ')}]`,
      });
    }
  }
  for (const name of byName.keys())
    problems.push({ code: 'bad_weight_file', path: `tensors (${name})`, expected: 'only tensors the model description names', received: name });
  return problems;
}
