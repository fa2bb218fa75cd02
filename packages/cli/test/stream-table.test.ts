/**
 * A table read as it arrives (stream-table.ts): lines split on \n and \r\n wherever the chunks break, UTF-8
 * characters decoded across chunk boundaries (the WHATWG Encoding standard's streaming TextDecoder); a line past the
 * limit refused at its line number before more is read; a quoted field spanning lines read as one record; a stray
 * quote named at the line and column where it opened, not at the last line read.
 */
import { describe, expect, it } from 'vitest';
import { boundedLines, tableRecords } from '../src/stream-table.js';

async function* chunks(...parts: (string | Uint8Array)[]): AsyncGenerator<string | Uint8Array> {
  for (const part of parts) yield part;
}

async function all<T>(source: AsyncIterable<T>): Promise<T[]> {
  const out: T[] = [];
  for await (const item of source) out.push(item);
  return out;
}

describe('lines as they arrive', () => {
  it('split on \\n and \\r\\n wherever chunks break, and decode a character split across chunks', async () => {
    const euro = new TextEncoder().encode('€'); // three bytes
    expect(await all(boundedLines(chunks('a,b\r', '\nc', 'd\n', euro.subarray(0, 1), euro.subarray(1), 'x\nlast'), 'in.csv'))).toEqual([
      'a,b',
      'cd',
      '€x',
      'last',
    ]);
  });

  it('refuse a line past the limit at its line number, without reading further', async () => {
    let pulled = 0;
    async function* endless(): AsyncGenerator<string> {
      yield 'short\n';
      for (;;) {
        pulled++;
        yield 'x'.repeat(100);
      }
    }
    await expect(all(boundedLines(endless(), 'big.csv', 1000))).rejects.toThrow(
      'big.csv:2: a line longer than 1,000 characters; weft run reads at most that much per line',
    );
    expect(pulled).toBeLessThan(20);
  });
});

describe('records as they arrive', () => {
  it('read a quoted field spanning lines as one record, on the line it started', async () => {
    const tables = await all(tableRecords(chunks('note,level', '"two', 'lines",3', 'plain,4') as AsyncIterable<string>, 'in.csv'));
    expect(tables.map((t) => [t.rows[0].line, t.rows[0].fields])).toEqual([
      [2, ['two\nlines', '3']],
      [4, ['plain', '4']],
    ]);
  });

  it('name a stray quote where it opened, after at most the line limit, however many rows follow', async () => {
    const rows = ['note,level', 'a,1', 'b,2', 'c "d,3', ...Array.from({ length: 20000 }, (_, i) => `r${i},${i}`)];
    await expect(all(tableRecords(chunks(...rows) as AsyncIterable<string>, 'stray.csv'))).rejects.toThrow(
      'stray.csv:4:3: a quote opened here is not closed within 1,000 lines (a stray quote?)',
    );
    await expect(all(tableRecords(chunks('note,level', 'a,1', 'b "c,2') as AsyncIterable<string>, 'end.csv'))).rejects.toThrow(
      'end.csv:3:3: a quote opened here is never closed (a stray quote?)',
    );
    await expect(all(tableRecords(chunks() as AsyncIterable<string>, 'empty.csv'))).rejects.toThrow('empty.csv: no header row (the input is empty)');
  });
});
