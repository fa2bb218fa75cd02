/** The protobuf wire format (protobuf encoding documentation): our reader and writer, and protobufjs on the same bytes. */
import { describe, expect, it } from 'vitest';
import protobuf from 'protobufjs';
import { ProtoWriter, floatsOf, int64Of, int64sOf, readFields, stringOf } from '../../src/onnx/protobuf.js';

describe('the protobuf wire format', () => {
  it("reads varints as the encoding documentation's example gives them: 150 is 96 01, and a 10-byte −1", () => {
    const fields = readFields(Uint8Array.of(0x08, 0x96, 0x01, 0x10, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0x01), 0, 'message');
    expect(fields.map((f) => [f.number, f.wire, f.at])).toEqual([
      [1, 0, 0],
      [2, 0, 3],
    ]);
    expect([int64Of(fields[0], 'message', 'a'), int64Of(fields[1], 'message', 'b')]).toEqual([150, -1]);
  });

  it("writes what protobufjs's general-purpose writer writes for the same fields, and reads it back", () => {
    const ours = new ProtoWriter()
      .int(1, -2)
      .string(2, 'weft ✓')
      .floats(3, [1.5, -0.25])
      .ints(4, [3, 300, -1])
      .message(5, (m) => m.float(1, 2.5))
      .finish();
    const theirs = protobuf.Writer.create();
    theirs
      .uint32(8)
      .int64(-2)
      .uint32(18)
      .string('weft ✓')
      .uint32(26)
      .fork()
      .float(1.5)
      .float(-0.25)
      .ldelim()
      .uint32(34)
      .fork()
      .int64(3)
      .int64(300)
      .int64(-1)
      .ldelim();
    theirs.uint32(42).fork().uint32(13).float(2.5).ldelim();
    expect(Array.from(ours)).toEqual(Array.from(theirs.finish()));
    const fields = readFields(ours, 0, 'm');
    expect(int64Of(fields[0], 'm', 'a')).toBe(-2);
    expect(stringOf(fields[1], 'm', 'b')).toBe('weft ✓');
    expect(Array.from(floatsOf(fields[2], 'm', 'c'))).toEqual([1.5, -0.25]);
    expect(int64sOf(fields[3], 'm', 'd')).toEqual([3, 300, -1]);
  });

  it('reads packed varints of every length as protobufjs writes them, 1 to 10 bytes, negatives and ±2^53 included', () => {
    const values = [0, 1, 127, 128, 300, 2 ** 28, 2 ** 35 + 5, 2 ** 48 - 1, 2 ** 49, 2 ** 53 - 1, -1, -300, -(2 ** 53) + 1];
    const theirs = protobuf.Writer.create();
    theirs.uint32(10).fork();
    for (const v of values) theirs.int64(v);
    theirs.ldelim();
    const fields = readFields(theirs.finish(), 0, 'm');
    expect(int64sOf(fields[0], 'm', 'ints')).toEqual(values);
    // 2^53 itself is past what a number holds exactly: refused, not rounded.
    const big = protobuf.Writer.create();
    big
      .uint32(10)
      .fork()
      .int64(protobuf.util.LongBits.fromNumber(2 ** 53).toLong())
      .ldelim();
    expect(() => int64sOf(readFields(big.finish(), 0, 'm')[0], 'm', 'ints')).toThrowError(
      /^Bad data at m\.ints @\d+: expected an integer within ±2\^53, received 9007199254740992$/,
    );
    // A packed run cut in the middle of a varint.
    const cut = readFields(Uint8Array.of(0x0a, 0x02, 0x96, 0x81), 0, 'm');
    expect(() => int64sOf(cut[0], 'm', 'ints')).toThrowError(/^Bad data at m\.ints @\d+: expected complete packed varints, received a varint cut short$/);
  });

  it('refuses bytes cut short, a length past the end, group wire types and a field of the wrong wire type, by offset', () => {
    expect(() => readFields(Uint8Array.of(0x08, 0x96), 0, 'model.onnx')).toThrowError(
      'Bad data at model.onnx @2: expected a complete varint, received the end of the bytes (the file is cut short)',
    );
    expect(() => readFields(Uint8Array.of(0x0a, 0x05, 0x01), 0, 'model.onnx')).toThrowError(
      'Bad data at model.onnx @0: expected a field of at most 1 bytes (what is left), received a length of 5 (field 1; the file is cut short or damaged)',
    );
    expect(() => readFields(Uint8Array.of(0x0b), 10, 'model.onnx')).toThrowError(
      'Bad data at model.onnx @10: expected wire type 0, 1, 2 or 5, received group start (3) for field 1',
    );
    const fields = readFields(Uint8Array.of(0x08, 0x01), 0, 'graph');
    expect(() => stringOf(fields[0], 'graph', 'name')).toThrowError(
      'Bad data at graph.name @0: expected wire type 2 (length-delimited), received wire type 0 (varint)',
    );
  });
});
