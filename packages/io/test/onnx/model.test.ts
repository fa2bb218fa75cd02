/**
 * ONNX messages: every model and tensor file of the ONNX backend test data (tests/fixtures/onnx) decoded by our
 * reader and by protobufjs with ONNX's published schema gives the same nodes, attributes, graph inputs and tensors;
 * what we write decodes back to what we wrote; tensors that claim too much, or live outside the file, are refused
 * before anything is allocated.
 */
import { existsSync, readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { decodeOnnxModel, decodeOnnxTensor, encodeOnnxModel } from '@weft/io/onnx';
import { ProtoWriter } from '../../src/onnx/protobuf.js';
import { decodeIndependently, floatsOfIndependent } from './independent.js';

const folder = fileURLToPath(new URL('../../../../tests/fixtures/onnx/', import.meta.url));
const cases = existsSync(folder)
  ? readdirSync(folder)
      .filter((name) => name.startsWith('test_'))
      .sort()
  : [];

interface Theirs {
  irVersion: number;
  graph: {
    node: { opType: string; input: string[]; output: string[]; attribute?: { name: string; i?: number }[] }[];
    input: { name: string; type: { tensorType: { elemType: number; shape: { dim: { dimValue?: number }[] } } } }[];
  };
}

describe('ONNX messages', () => {
  it("decode like protobufjs with ONNX's schema, for every model and tensor file of the ONNX backend test data", () => {
    expect(cases).toHaveLength(12);
    for (const name of cases) {
      const bytes = readFileSync(join(folder, name, 'model.onnx'));
      const ours = decodeOnnxModel(bytes);
      const theirs = decodeIndependently(bytes) as unknown as Theirs;
      expect(ours.irVersion).toBe(theirs.irVersion);
      expect(ours.graph.nodes.map((n) => [n.opType, n.inputs, n.outputs])).toEqual(theirs.graph.node.map((n) => [n.opType, n.input, n.output]));
      expect(ours.graph.nodes[0].attributes.map((a) => [a.name, a.i])).toEqual((theirs.graph.node[0].attribute ?? []).map((a) => [a.name, a.i]));
      expect(ours.graph.inputs.map((i) => [i.name, i.elementType, i.dims])).toEqual(
        theirs.graph.input.map((i) => [i.name, i.type.tensorType.elemType, i.type.tensorType.shape.dim.map((d) => d.dimValue)]),
      );
      for (const file of readdirSync(join(folder, name, 'test_data_set_0'))) {
        const tensorBytes = readFileSync(join(folder, name, 'test_data_set_0', file));
        const tensor = decodeOnnxTensor(tensorBytes);
        const other = decodeIndependently(tensorBytes, 'onnx.TensorProto') as { dims: number[]; dataType: number; int32Data?: number[]; rawData?: number[] };
        expect(tensor.dims, `${name}/${file}`).toEqual(other.dims);
        const raw = other.rawData === undefined ? null : new DataView(Uint8Array.from(other.rawData).buffer);
        const values =
          tensor.dataType === 1
            ? floatsOfIndependent(other)
            : (other.int32Data ?? Array.from({ length: raw!.byteLength / 4 }, (_, i) => raw!.getInt32(4 * i, true)));
        expect(Array.from(tensor.values as ArrayLike<number>), `${name}/${file}`).toEqual(values);
      }
    }
  });

  it('decode to what was encoded: nodes, attributes of every kind, initializers and shapes', () => {
    const model = {
      irVersion: 10,
      opsets: [{ domain: '', version: 22 }],
      producerName: 'a test',
      producerVersion: '1',
      metadata: { key: 'value' },
      graph: {
        name: 'g',
        nodes: [
          {
            name: 'n',
            opType: 'Transpose',
            domain: '',
            inputs: ['x'],
            outputs: ['y'],
            attributes: [
              { name: 'perm', type: 7, ints: [1, 0] },
              { name: 'f', type: 1, f: 0.5 },
              { name: 's', type: 3, s: 'text' },
              { name: 'ss', type: 8, strings: ['A', 'B'] },
            ],
          },
        ],
        initializers: [
          { name: 'w', dataType: 1, dims: [2, 2], values: Float32Array.of(1, -2, 3.5, 0) },
          { name: 'shape', dataType: 7, dims: [3], values: [0, 0, -1] },
        ],
        inputs: [{ name: 'x', elementType: 1, dims: ['steps', 2] }],
        outputs: [{ name: 'y', elementType: 1, dims: null }],
      },
    };
    const back = decodeOnnxModel(encodeOnnxModel(model));
    expect(back).toEqual(model);
  });

  it('refuse a tensor claiming 2 GB before allocating, data outside the file, and an element type weft does not read', () => {
    const claim = new ProtoWriter().int(1, 536_870_912).int(2, 1).string(8, 'huge').bytes(9, new Uint8Array(4)).finish();
    expect(() => decodeOnnxTensor(claim, 'input_0.pb')).toThrowError(
      'Bad data at input_0.pb (huge).dims: expected at most 50000000 elements, received [536870912]: 536870912 elements (2147483648 bytes), refused before reading',
    );
    // Dims whose product overflows (2^40 three times) are refused as more than the limit, never as NaN bytes; with a
    // 0 among them the tensor is empty, whatever the others claim.
    const overflow = new ProtoWriter()
      .int(1, 2 ** 40)
      .int(1, 2 ** 40)
      .int(1, 2 ** 40)
      .int(2, 1)
      .string(8, 'vast')
      .finish();
    expect(() => decodeOnnxTensor(overflow, 'input_1.pb')).toThrowError(
      'Bad data at input_1.pb (vast).dims: expected at most 50000000 elements, received [1099511627776,1099511627776,1099511627776]: more than 50000000 elements, refused before reading',
    );
    const empty = new ProtoWriter()
      .int(1, 2 ** 40)
      .int(1, 2 ** 40)
      .int(1, 0)
      .int(2, 1)
      .string(8, 'none')
      .finish();
    expect(decodeOnnxTensor(empty, 'input_2.pb').values).toHaveLength(0);
    // An ir_version written as 2^64 − 1 reads as the int64 −1 (onnx.proto declares it int64): no version is negative.
    expect(() => decodeOnnxModel(new ProtoWriter().int(1, -1).finish(), 'odd.onnx')).toThrowError(
      'Bad data at odd.onnx.ir_version: expected a version ≥ 0, received -1 (18446744073709551615 written as unsigned)',
    );
    const outside = new ProtoWriter().int(1, 2).int(2, 1).string(8, 'w').int(14, 1).finish();
    expect(() => decodeOnnxTensor(outside, 'model.onnx')).toThrowError(/^Bad data at model\.onnx \(w\)\.external_data: expected tensor data inside the file/);
    const doubles = new ProtoWriter().int(1, 1).int(2, 11).string(8, 'd').bytes(9, new Uint8Array(8)).finish();
    expect(() => decodeOnnxTensor(doubles, 'x.pb')).toThrowError(
      'Bad data at x.pb (d).data_type: expected FLOAT (1), INT32 (6) or INT64 (7), received DOUBLE (11)',
    );
    const short = new ProtoWriter().int(1, 3).int(2, 1).string(8, 's').bytes(9, new Uint8Array(8)).finish();
    expect(() => decodeOnnxTensor(short, 'x.pb')).toThrowError('Bad data at x.pb (s).raw_data: expected 12 bytes (3 floats for dims [3]), received 8 bytes');
  });

  it('refuse a model file cut short, naming the byte where it ends', () => {
    const bytes = readFileSync(join(folder, 'test_lstm_defaults', 'model.onnx'));
    expect(() => decodeOnnxModel(bytes.subarray(0, 100), 'cut.onnx')).toThrowError(
      /^Bad data at cut\.onnx @\d+: expected a field of at most \d+ bytes \(what is left\), received a length of \d+/,
    );
  });
});
