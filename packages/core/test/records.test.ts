import { describe, expect, it } from 'vitest';
import { isRecord } from '@weft/core';

describe('telling a JSON object from other values', () => {
  it('accepts objects parsed from JSON and refuses every other JSON value (the value kinds of RFC 8259 §3)', () => {
    expect(['{}', '{"a": 1}', '{"__proto__": {}}'].map((text) => isRecord(JSON.parse(text)))).toEqual([true, true, true]);
    expect(['null', '[]', '[{}]', '1', '"text"', 'true', 'false'].map((text) => isRecord(JSON.parse(text)))).toEqual([
      false,
      false,
      false,
      false,
      false,
      false,
      false,
    ]);
  });

  it('refuses undefined and functions, which JSON cannot hold', () => {
    expect([isRecord(undefined), isRecord(() => 1)]).toEqual([false, false]);
  });
});
