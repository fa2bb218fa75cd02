/**
 * The one error type of weft. Every problem carries a machine-readable `code`, where it happened (`path`),
 * and what was expected versus what arrived; `describeProblem` words every message from those fields so
 * that messages read alike across the library.
 */

export type ProblemCode =
  | 'shape_mismatch'
  | 'dtype_mismatch'
  | 'invalid_option'
  | 'invalid_argument'
  | 'bad_weight_file'
  | 'bad_data'
  | 'not_finite'
  | 'tape_state'
  | 'backend_mismatch'
  | 'backend_unavailable'
  | 'backend_memory'
  | 'digest_failed'
  | 'worker_failed'
  | 'write_failed';

/** One thing wrong with an input, as data: what kind, where, what was expected and what arrived. */
export interface Problem {
  /** What kind of problem it is, for programs to act on. */
  readonly code: ProblemCode;
  /** Where the problem is: an operation and argument (`matmul.b`), a JSON path, or `file.csv:17:3`. */
  readonly path: string;
  /** What was expected, in words or as a shape such as `[64, 256]`. Empty when there is nothing to contrast. */
  readonly expected: string;
  /** What arrived. */
  readonly received: string;
  /** Extra words, when the code and the two values do not say enough. */
  readonly detail?: string;
}

const codeWords: Record<ProblemCode, string> = {
  shape_mismatch: 'Shape mismatch',
  dtype_mismatch: 'Dtype mismatch',
  invalid_option: 'Invalid option',
  invalid_argument: 'Invalid argument',
  bad_weight_file: 'Bad weight file',
  bad_data: 'Bad data',
  not_finite: 'Non-finite value',
  tape_state: 'Tape misuse',
  backend_mismatch: 'Backend mismatch',
  backend_unavailable: 'Backend unavailable',
  backend_memory: 'Backend memory exhausted',
  digest_failed: 'Digest failed',
  worker_failed: 'Training thread failed',
  write_failed: 'Could not save',
};

/** Words one problem: "Shape mismatch at matmul.b: expected [3, 4], received [5, 4]". */
export function describeProblem(problem: Problem): string {
  let text = `${codeWords[problem.code]} at ${problem.path}`;
  if (problem.expected !== '' || problem.received !== '') {
    text += `: expected ${problem.expected}, received ${problem.received}`;
  }
  if (problem.detail !== undefined && problem.detail !== '') {
    text += ` (${problem.detail})`;
  }
  return text;
}

/** The one error type weft throws: one or more problems, worded alike by `describeProblem`. */
export class WeftError extends Error {
  /** Every problem found, in the order found (a weight file lists all its problems at once). */
  readonly problems: readonly Problem[];

  constructor(problems: Problem | readonly Problem[]) {
    const list: readonly Problem[] = Array.isArray(problems) ? problems : [problems as Problem];
    const message = list.length === 1 ? describeProblem(list[0]) : `${list.length} problems:\n${list.map((p) => `  - ${describeProblem(p)}`).join('\n')}`;
    super(message);
    this.name = 'WeftError';
    this.problems = list;
  }

  /** The first problem's code; most errors carry exactly one problem. */
  get code(): ProblemCode {
    return this.problems[0].code;
  }

  /** Where the first problem is. */
  get path(): string {
    return this.problems[0].path;
  }

  /** What the first problem expected. */
  get expected(): string {
    return this.problems[0].expected;
  }

  /** What the first problem received. */
  get received(): string {
    return this.problems[0].received;
  }
}

/** Writes a shape the way every message shows it: `[2, 3]`. */
export function formatShape(shape: readonly number[]): string {
  return `[${shape.join(', ')}]`;
}

/** Throws a `WeftError` with one problem made of these fields. */
export function fail(code: ProblemCode, path: string, expected: string, received: string, detail?: string): never {
  throw new WeftError({ code, path, expected, received, detail });
}
