/**
 * The one place the command writes to the terminal. Anything that came from a file (tensor and metadata names,
 * values, parse errors) goes through `shown`, which escapes control characters (so a name cannot forge a line or
 * send an escape sequence to the terminal) and cuts it at a stated length; error lines are cut at `MAX_LINE`. A
 * closed pipe (`weft … | head -1`) ends the command quietly with exit 0 rather than with a stack trace.
 */

/** Longest value from a file shown in full, in characters. */
export const MAX_VALUE = 200;
/** Longest error line written, in characters, before its `weft: ` prefix and the count of what was cut. */
export const MAX_LINE = 1000;
/** So no line the command writes from a file's content is longer than this. */
export const LONGEST_LINE = MAX_LINE + 40;

// C0 and C1 controls, DEL, the line and paragraph separators, and the bidirectional overrides and isolates.
const unsafe = /[\u0000-\u001f\u007f-\u009f\u2028\u2029\u202a-\u202e\u2066-\u2069]/g;

function escapeCharacter(character: string): string {
  const named: Record<string, string> = { '\n': '\\n', '\r': '\\r', '\t': '\\t' };
  return named[character] ?? `\\u{${character.codePointAt(0)!.toString(16)}}`;
}

/** `text` safe to print: control characters escaped, cut to `max` characters with a count of what was left out. */
export function shown(text: string, max = MAX_VALUE): string {
  const cut = text.length > max ? text.slice(0, max) : text;
  const safe = cut.replace(unsafe, escapeCharacter);
  return text.length > max ? `${safe}… (${text.length - max} more characters)` : safe;
}

/**
 * A value written as data (a CSV cell of `weft run`): every control character escaped as `shown` escapes it, except
 * tab, line feed and carriage return, which a quoted CSV field holds as they are; nothing cut.
 */
export function dataText(text: string): string {
  return text.replace(unsafe, (c) => (c === '\t' || c === '\n' || c === '\r' ? c : escapeCharacter(c)));
}

/** A CSV cell of output: a number as it is, text with its control characters escaped (dataText) and quoted where CSV needs it (RFC 4180). */
export function csvCell(value: string | number): string {
  if (typeof value !== 'string') return String(value);
  const safe = dataText(value);
  return /[",\n\r]/.test(safe) ? `"${safe.replace(/"/g, '""')}"` : safe;
}

/** One line of output: every character escaped as `shown` does, at most `MAX_LINE` characters. */
export function line(text: string): string {
  return shown(text, MAX_LINE);
}

/** Ends the process quietly (exit 0) when standard output or error is a pipe whose reader has gone. */
export function endQuietlyOnClosedPipes(): void {
  const quiet = (error: NodeJS.ErrnoException): void => {
    if (error.code === 'EPIPE') process.exit(0);
    throw error;
  };
  process.stdout.on('error', quiet);
  process.stderr.on('error', quiet);
}
