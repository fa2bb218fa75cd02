/**
 * A table read as it arrives (`weft run -`), one record at a time, within stated bounds: a line may hold at most
 * MAX_LINE characters (checked while reading, before a longer one is held in memory), and a quoted field may span
 * at most MAX_QUOTED_LINES lines; past either, a one-line error names the file and line (and, for a quote, the
 * column where it opened). Quotes are counted line by line, so a long record costs time in proportion to its size.
 */
import type { Readable } from 'node:stream';
import { parseTable } from '@weft/io';
import type { Table } from '@weft/io';
import { CommandError } from './errors.js';

/** The longest line read, in characters. */
export const MAX_LINE = 1_000_000;
/** The most lines one quoted field may span. */
export const MAX_QUOTED_LINES = 1_000;

/** The lines of a stream of UTF-8 text (\n or \r\n), each at most `maxLine` characters. */
export async function* boundedLines(input: Readable | AsyncIterable<string | Uint8Array>, file: string, maxLine = MAX_LINE): AsyncGenerator<string> {
  const decoder = new TextDecoder();
  let partial = '';
  let line = 0;
  const tooLong = (): never => {
    // Stop the stream too: left open, it would go on filling memory with input nobody reads.
    if (typeof (input as Readable).destroy === 'function') (input as Readable).destroy();
    throw new CommandError(`${file}:${line + 1}: a line longer than ${maxLine.toLocaleString('en')} characters; weft run reads at most that much per line`);
  };
  for await (const chunk of input as AsyncIterable<string | Uint8Array>) {
    partial += typeof chunk === 'string' ? chunk : decoder.decode(chunk, { stream: true });
    let start = 0;
    for (let end = partial.indexOf('\n'); end >= 0; end = partial.indexOf('\n', start)) {
      if (end - start > maxLine) tooLong();
      const text = partial.slice(start, end);
      line++;
      yield text.endsWith('\r') ? text.slice(0, -1) : text;
      start = end + 1;
    }
    partial = partial.slice(start);
    if (partial.length > maxLine) tooLong();
  }
  partial += decoder.decode();
  if (partial !== '') yield partial.endsWith('\r') ? partial.slice(0, -1) : partial;
}

/** The rows of a table, one record at a time, as lines arrive (a quoted field may span lines, within the bounds). */
export async function* tableRecords(lines: AsyncIterable<string>, file: string, maxQuotedLines = MAX_QUOTED_LINES): AsyncGenerator<Table> {
  let header: readonly string[] | null = null;
  let delimiter: Table['delimiter'] = ',';
  let pending: string[] = [];
  let open = false;
  let lineNumber = 0;
  let startLine = 0;
  // Where the quote that is still open was opened.
  let openerLine = 0;
  let openerColumn = 0;
  for await (const raw of lines) {
    lineNumber++;
    if (header === null) {
      const head = parseTable(`${raw}\n`, { file });
      header = head.header;
      delimiter = head.delimiter;
      continue;
    }
    if (pending.length === 0) startLine = lineNumber;
    // Quotes counted in this line alone: a record is complete when no quote is left open.
    for (let i = raw.indexOf('"'); i >= 0; i = raw.indexOf('"', i + 1)) {
      if (!open) {
        openerLine = lineNumber;
        openerColumn = i + 1;
      }
      open = !open;
    }
    pending.push(raw);
    if (open) {
      if (pending.length > maxQuotedLines) {
        throw new CommandError(
          `${file}:${openerLine}:${openerColumn}: a quote opened here is not closed within ${maxQuotedLines.toLocaleString('en')} lines (a stray quote?)`,
        );
      }
      continue;
    }
    const table = parseTable(`${pending.join('\n')}\n`, { file, header, delimiter, firstLine: startLine });
    pending = [];
    if (table.rows.length > 0) yield table;
  }
  if (header === null) throw new CommandError(`${file}: no header row (the input is empty)`);
  if (open) throw new CommandError(`${file}:${openerLine}:${openerColumn}: a quote opened here is never closed (a stray quote?)`);
  if (pending.length > 0) parseTable(pending.join('\n'), { file, header, delimiter, firstLine: startLine });
}
