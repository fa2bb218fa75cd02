/**
 * ONNX models as plain data: the messages of ONNX's schema (onnx.proto, Apache 2.0) that a recurrent model uses —
 * ModelProto, GraphProto, NodeProto, AttributeProto, TensorProto, ValueInfoProto and the small ones around them —
 * decoded from and encoded to the protobuf wire format. Field numbers are the schema's. Tensor data is checked
 * against its dims and type before anything is copied; data held outside the file (`external_data`) is refused.
 *
 * Why one file of this length: decoding and encoding are the two halves of one schema, kept side by side so a field
 * number is read and written in one place.
 */
import { fail } from '@weft/core';
import { ProtoWriter, bytesOf, floatsOf, int64Of, int64sOf, littleEndian, readFields, requireWire, stringOf } from './protobuf.js';
import type { WireField } from './protobuf.js';

/** ONNX TensorProto.DataType values weft reads (FLOAT, INT32, INT64) and the one it writes (FLOAT). */
export const ONNX_FLOAT = 1;
export const ONNX_INT32 = 6;
export const ONNX_INT64 = 7;
const typeNames: Record<number, string> = {
  1: 'FLOAT',
  2: 'UINT8',
  3: 'INT8',
  4: 'UINT16',
  5: 'INT16',
  6: 'INT32',
  7: 'INT64',
  8: 'STRING',
  9: 'BOOL',
  10: 'FLOAT16',
  11: 'DOUBLE',
  12: 'UINT32',
  13: 'UINT64',
  16: 'BFLOAT16',
};

/** A tensor: its name, dims and values (float32, or integers for INT32/INT64). */
export interface OnnxTensor {
  /** The tensor's name in the graph ('' for an anonymous one). */
  readonly name: string;
  /** ONNX's element type (1 FLOAT, 6 INT32, 7 INT64). */
  readonly dataType: number;
  /** The shape. */
  readonly dims: readonly number[];
  /** The values, row-major: Float32Array for FLOAT, numbers for the integer types. */
  readonly values: Float32Array | readonly number[];
}

/** One attribute of a node, by kind. */
export interface OnnxAttribute {
  /** The attribute's name (`hidden_size`). */
  readonly name: string;
  /** AttributeProto.AttributeType: 1 FLOAT, 2 INT, 3 STRING, 4 TENSOR, 5 GRAPH, 6 FLOATS, 7 INTS, 8 STRINGS. */
  readonly type: number;
  /** FLOAT. */
  readonly f?: number;
  /** INT. */
  readonly i?: number;
  /** STRING. */
  readonly s?: string;
  /** TENSOR. */
  readonly t?: OnnxTensor;
  /** GRAPH (the body of a Scan). */
  readonly g?: OnnxGraph;
  /** FLOATS. */
  readonly floats?: readonly number[];
  /** INTS. */
  readonly ints?: readonly number[];
  /** STRINGS. */
  readonly strings?: readonly string[];
}

/** One operator application. */
export interface OnnxNode {
  /** The node's name ('' when the file gives none). */
  readonly name: string;
  /** The operator (`LSTM`, `MatMul`). */
  readonly opType: string;
  /** The operator set's domain ('' is the default ONNX domain). */
  readonly domain: string;
  /** Input value names in order; '' for an optional input left out. */
  readonly inputs: readonly string[];
  /** Output value names in order; '' for an optional output not asked for. */
  readonly outputs: readonly string[];
  /** The attributes the node sets. */
  readonly attributes: readonly OnnxAttribute[];
}

/** A graph input or output: its name, element type and dims (a number, a symbolic name, or null when unknown). */
export interface OnnxValueInfo {
  /** The value's name. */
  readonly name: string;
  /** Element type (0 when not given). */
  readonly elementType: number;
  /** Dims: numbers, symbolic names, or null for unknown; null for a value of no known rank. */
  readonly dims: readonly (number | string | null)[] | null;
}

/** A graph: nodes in topological order, constant tensors, inputs and outputs. */
export interface OnnxGraph {
  /** The graph's name. */
  readonly name: string;
  /** The nodes. */
  readonly nodes: readonly OnnxNode[];
  /** The constant tensors, by name. */
  readonly initializers: readonly OnnxTensor[];
  /** What the graph takes. */
  readonly inputs: readonly OnnxValueInfo[];
  /** What the graph gives. */
  readonly outputs: readonly OnnxValueInfo[];
}

/** One operator set a model imports. */
export interface OnnxOperatorSet {
  /** Its domain ('' is the default ONNX domain). */
  readonly domain: string;
  /** Its version. */
  readonly version: number;
}

/** A model: the IR version, the operator sets it imports, its graph and its metadata. */
export interface OnnxModel {
  /** The IR version the file follows. */
  readonly irVersion: number;
  /** Operator sets used, by domain ('' is the default ONNX domain). */
  readonly opsets: readonly OnnxOperatorSet[];
  /** The program that wrote the file. */
  readonly producerName: string;
  /** Its version. */
  readonly producerVersion: string;
  /** The graph. */
  readonly graph: OnnxGraph;
  /** `metadata_props`, as key → value. */
  readonly metadata: Readonly<Record<string, string>>;
}

/** Deepest nesting of graphs in attributes (a Scan's body is one level) a file may have. */
const MAX_GRAPH_DEPTH = 8;

/** Most elements one tensor may hold (the weight file's limit). */
const MAX_ELEMENTS = 50_000_000;

function groups(fields: readonly WireField[]): Map<number, WireField[]> {
  const map = new Map<number, WireField[]>();
  for (const f of fields) {
    const list = map.get(f.number);
    if (list === undefined) map.set(f.number, [f]);
    else list.push(f);
  }
  return map;
}

function last(map: Map<number, WireField[]>, number: number): WireField | undefined {
  const list = map.get(number);
  return list === undefined ? undefined : list[list.length - 1];
}

function nested(field: WireField, path: string, name: string, base: (f: WireField) => number): WireField[] {
  requireWire(field, 2, path, name);
  return readFields(field.value as Uint8Array, base(field), `${path}.${name}`);
}

/** Where a length-delimited field's bytes start in the whole input (the key and length come before them). */
function startOf(bytes: Uint8Array, offset: number) {
  return (field: WireField): number => {
    const value = field.value as Uint8Array;
    return value.byteOffset - bytes.byteOffset + offset;
  };
}

/** Decodes a TensorProto (the body of an ONNX tensor file, or of a field). */
export function decodeTensor(bytes: Uint8Array, path = 'tensor', offset = 0): OnnxTensor {
  const map = groups(readFields(bytes, offset, path));
  const name = last(map, 8) === undefined ? '' : stringOf(last(map, 8)!, path, 'name');
  const where = name === '' ? path : `${path} (${name})`;
  const dims = (map.get(1) ?? []).flatMap((f) => int64sOf(f, where, 'dims'));
  const dataType = last(map, 2) === undefined ? 0 : int64Of(last(map, 2)!, where, 'data_type');
  const location = last(map, 14);
  if ((location !== undefined && int64Of(location, where, 'data_location') !== 0) || map.has(13)) {
    fail('bad_data', `${where}.external_data`, 'tensor data inside the file', 'data held in an external file (save the model with its weights inside it)');
  }
  for (const d of dims) {
    if (!Number.isInteger(d) || d < 0) fail('bad_data', `${where}.dims`, 'whole numbers ≥ 0', JSON.stringify(dims));
  }
  // The product, stopped once past the limit (a product of huge dims overflows to Infinity, and Infinity × 0 is NaN).
  let count = dims.includes(0) ? 0 : 1;
  let multiplied = 0;
  for (const d of dims) {
    if (count > MAX_ELEMENTS) break;
    count *= d;
    multiplied++;
  }
  if (count > MAX_ELEMENTS) {
    const claimed = multiplied === dims.length && Number.isSafeInteger(count) ? `${count} elements (${count * 4} bytes)` : `more than ${MAX_ELEMENTS} elements`;
    fail('bad_data', `${where}.dims`, `at most ${MAX_ELEMENTS} elements`, `${JSON.stringify(dims)}: ${claimed}, refused before reading`);
  }
  const raw = last(map, 9);
  if (dataType === ONNX_FLOAT) {
    let values: Float32Array;
    if (raw !== undefined) {
      const data = bytesOf(raw, where, 'raw_data');
      if (data.length !== count * 4)
        fail('bad_data', `${where}.raw_data`, `${count * 4} bytes (${count} floats for dims ${JSON.stringify(dims)})`, `${data.length} bytes`);
      values = new Float32Array(littleEndian(data, 4).buffer);
    } else {
      const parts = (map.get(4) ?? []).map((f) => floatsOf(f, where, 'float_data'));
      const total = parts.reduce((n, p) => n + p.length, 0);
      if (total !== count) fail('bad_data', `${where}.float_data`, `${count} floats (dims ${JSON.stringify(dims)})`, `${total}`);
      values = new Float32Array(total);
      let at = 0;
      for (const p of parts) {
        values.set(p, at);
        at += p.length;
      }
    }
    return { name, dataType, dims, values };
  }
  if (dataType === ONNX_INT32 || dataType === ONNX_INT64) {
    let values: number[];
    if (raw !== undefined) {
      const data = bytesOf(raw, where, 'raw_data');
      const size = dataType === ONNX_INT32 ? 4 : 8;
      if (data.length !== count * size) fail('bad_data', `${where}.raw_data`, `${count * size} bytes (${count} integers)`, `${data.length} bytes`);
      const view = new DataView(data.buffer, data.byteOffset, data.byteLength);
      values = Array.from({ length: count }, (_, k) => (size === 4 ? view.getInt32(k * 4, true) : Number(view.getBigInt64(k * 8, true))));
    } else {
      values = (map.get(dataType === ONNX_INT32 ? 5 : 7) ?? []).flatMap((f) => int64sOf(f, where, dataType === ONNX_INT32 ? 'int32_data' : 'int64_data'));
      if (values.length !== count) fail('bad_data', `${where}`, `${count} integers (dims ${JSON.stringify(dims)})`, `${values.length}`);
    }
    return { name, dataType, dims, values };
  }
  fail('bad_data', `${where}.data_type`, 'FLOAT (1), INT32 (6) or INT64 (7)', `${typeNames[dataType] ?? 'unknown'} (${dataType})`);
}

function decodeAttribute(fields: WireField[], path: string, base: (f: WireField) => number, depth: number): OnnxAttribute {
  const map = groups(fields);
  const name = last(map, 1) === undefined ? '' : stringOf(last(map, 1)!, path, 'name');
  const where = `${path} (${name})`;
  const type = last(map, 20) === undefined ? 0 : int64Of(last(map, 20)!, where, 'type');
  const attribute: { -readonly [K in keyof OnnxAttribute]: OnnxAttribute[K] } = { name, type };
  const f = last(map, 2);
  if (f !== undefined) attribute.f = floatsOf(f, where, 'f')[0];
  const i = last(map, 3);
  if (i !== undefined) attribute.i = int64Of(i, where, 'i');
  const s = last(map, 4);
  if (s !== undefined) attribute.s = stringOf(s, where, 's');
  const t = last(map, 5);
  if (t !== undefined) attribute.t = decodeTensor(bytesOf(t, where, 't'), `${where}.t`, base(t));
  const g = last(map, 6);
  if (g !== undefined) attribute.g = decodeGraph(groups(nested(g, where, 'g', base)), `${where}.g`, base, depth + 1);
  if (map.has(7)) attribute.floats = (map.get(7) ?? []).flatMap((x) => Array.from(floatsOf(x, where, 'floats')));
  if (map.has(8)) attribute.ints = (map.get(8) ?? []).flatMap((x) => int64sOf(x, where, 'ints'));
  if (map.has(9)) attribute.strings = (map.get(9) ?? []).map((x) => stringOf(x, where, 'strings'));
  return attribute;
}

function decodeValueInfo(fields: WireField[], path: string, base: (f: WireField) => number): OnnxValueInfo {
  const map = groups(fields);
  const name = last(map, 1) === undefined ? '' : stringOf(last(map, 1)!, path, 'name');
  let elementType = 0;
  let dims: (number | string | null)[] | null = null;
  const type = last(map, 2);
  if (type !== undefined) {
    const tensorType = last(groups(nested(type, path, 'type', base)), 1);
    if (tensorType !== undefined) {
      const tensor = groups(nested(tensorType, path, 'type.tensor_type', base));
      if (last(tensor, 1) !== undefined) elementType = int64Of(last(tensor, 1)!, path, 'elem_type');
      const shape = last(tensor, 2);
      if (shape !== undefined) {
        dims = (groups(nested(shape, path, 'shape', base)).get(1) ?? []).map((d) => {
          const dim = groups(nested(d, path, 'shape.dim', base));
          if (last(dim, 1) !== undefined) return int64Of(last(dim, 1)!, path, 'dim_value');
          if (last(dim, 2) !== undefined) return stringOf(last(dim, 2)!, path, 'dim_param');
          return null;
        });
      }
    }
  }
  return { name, elementType, dims };
}

/** Decodes a GraphProto's fields (the model's graph, or a Scan's body). */
function decodeGraph(graph: Map<number, WireField[]>, path: string, base: (f: WireField) => number, depth = 0): OnnxGraph {
  // A graph inside a node's attribute inside a graph …: bounded, so a crafted file cannot exhaust the stack.
  if (depth > MAX_GRAPH_DEPTH) fail('bad_data', path, `graphs nested at most ${MAX_GRAPH_DEPTH} deep`, 'deeper');
  const nodes = (graph.get(1) ?? []).map((f, index) => {
    const where = `${path}.node[${index}]`;
    const node = groups(nested(f, path, `node[${index}]`, base));
    const name = last(node, 3) === undefined ? '' : stringOf(last(node, 3)!, where, 'name');
    const opType = last(node, 4) === undefined ? '' : stringOf(last(node, 4)!, where, 'op_type');
    const label = `${where} (${name === '' ? opType : `${name}, ${opType}`})`;
    return {
      name,
      opType,
      domain: last(node, 7) === undefined ? '' : stringOf(last(node, 7)!, label, 'domain'),
      inputs: (node.get(1) ?? []).map((x) => stringOf(x, label, 'input')),
      outputs: (node.get(2) ?? []).map((x) => stringOf(x, label, 'output')),
      attributes: (node.get(5) ?? []).map((x, k) => decodeAttribute(nested(x, label, `attribute[${k}]`, base), `${label}.attribute[${k}]`, base, depth)),
    };
  });
  const initializers = (graph.get(5) ?? []).map((f, k) => decodeTensor(bytesOf(f, path, `initializer[${k}]`), `${path}.initializer[${k}]`, base(f)));
  const values = (number: number, name: string) =>
    (graph.get(number) ?? []).map((f, k) => decodeValueInfo(nested(f, path, `${name}[${k}]`, base), `${path}.${name}[${k}]`, base));
  return {
    name: last(graph, 2) === undefined ? '' : stringOf(last(graph, 2)!, path, 'name'),
    nodes,
    initializers,
    inputs: values(11, 'input'),
    outputs: values(12, 'output'),
  };
}

/** Decodes an ONNX model file. `file` names it in errors. */
export function decodeOnnxModel(bytes: Uint8Array, file = 'model.onnx'): OnnxModel {
  const base = startOf(bytes, 0);
  const model = groups(readFields(bytes, 0, file));
  const irVersion = last(model, 1) === undefined ? 0 : int64Of(last(model, 1)!, file, 'ir_version');
  // ir_version is an int64 (onnx.proto): one written past 2^63 − 1 as unsigned reads as negative, and no version is.
  if (irVersion < 0)
    fail('bad_data', `${file}.ir_version`, 'a version ≥ 0', `${irVersion} (${(2n ** 64n + BigInt(irVersion)).toString()} written as unsigned)`);
  const opsets = (model.get(8) ?? []).map((f) => {
    const o = groups(nested(f, file, 'opset_import', base));
    return {
      domain: last(o, 1) === undefined ? '' : stringOf(last(o, 1)!, file, 'opset_import.domain'),
      version: last(o, 2) === undefined ? 0 : int64Of(last(o, 2)!, file, 'opset_import.version'),
    };
  });
  const metadata: Record<string, string> = Object.create(null) as Record<string, string>;
  for (const f of model.get(14) ?? []) {
    const entry = groups(nested(f, file, 'metadata_props', base));
    metadata[last(entry, 1) === undefined ? '' : stringOf(last(entry, 1)!, file, 'metadata_props.key')] =
      last(entry, 2) === undefined ? '' : stringOf(last(entry, 2)!, file, 'metadata_props.value');
  }
  const graphField = last(model, 7);
  if (graphField === undefined) fail('bad_data', `${file}.graph`, 'a graph', 'none (is this an ONNX model file?)');
  const graph = decodeGraph(groups(nested(graphField, file, 'graph', base)), `${file}.graph`, base);
  return {
    irVersion,
    opsets,
    producerName: last(model, 2) === undefined ? '' : stringOf(last(model, 2)!, file, 'producer_name'),
    producerVersion: last(model, 3) === undefined ? '' : stringOf(last(model, 3)!, file, 'producer_version'),
    graph,
    metadata,
  };
}

function writeTensor(w: ProtoWriter, t: OnnxTensor): void {
  for (const d of t.dims) w.int(1, d);
  w.int(2, t.dataType);
  w.string(8, t.name);
  if (t.dataType === ONNX_FLOAT) {
    w.bytes(9, littleEndian(new Uint8Array(Float32Array.from(t.values as ArrayLike<number>).buffer), 4));
  } else {
    const size = t.dataType === ONNX_INT32 ? 4 : 8;
    const raw = new DataView(new ArrayBuffer(t.values.length * size));
    t.values.forEach((v, k) => (size === 4 ? raw.setInt32(k * 4, v, true) : raw.setBigInt64(k * 8, BigInt(v), true)));
    w.bytes(9, new Uint8Array(raw.buffer));
  }
}

function writeValueInfo(w: ProtoWriter, v: OnnxValueInfo): void {
  w.string(1, v.name);
  w.message(2, (type) =>
    type.message(1, (tensor) => {
      tensor.int(1, v.elementType);
      if (v.dims !== null) {
        const dims = v.dims;
        tensor.message(2, (shape) => {
          for (const d of dims) shape.message(1, (dim) => (typeof d === 'number' ? dim.int(1, d) : typeof d === 'string' ? dim.string(2, d) : undefined));
        });
      }
    }),
  );
}

function writeGraph(g: ProtoWriter, graph: OnnxGraph): void {
  for (const node of graph.nodes) {
    g.message(1, (n) => {
      for (const x of node.inputs) n.string(1, x);
      for (const x of node.outputs) n.string(2, x);
      if (node.name !== '') n.string(3, node.name);
      n.string(4, node.opType);
      for (const a of node.attributes) n.message(5, (attribute) => writeAttribute(attribute, a));
      if (node.domain !== '') n.string(7, node.domain);
    });
  }
  g.string(2, graph.name);
  for (const t of graph.initializers) g.message(5, (x) => writeTensor(x, t));
  for (const v of graph.inputs) g.message(11, (x) => writeValueInfo(x, v));
  for (const v of graph.outputs) g.message(12, (x) => writeValueInfo(x, v));
}

function writeAttribute(attribute: ProtoWriter, a: OnnxAttribute): void {
  attribute.string(1, a.name);
  if (a.f !== undefined) attribute.float(2, a.f);
  if (a.i !== undefined) attribute.int(3, a.i);
  if (a.s !== undefined) attribute.string(4, a.s);
  if (a.t !== undefined) attribute.message(5, (t) => writeTensor(t, a.t!));
  if (a.g !== undefined) attribute.message(6, (g) => writeGraph(g, a.g!));
  if (a.floats !== undefined) for (const v of a.floats) attribute.float(7, v);
  if (a.ints !== undefined) for (const v of a.ints) attribute.int(8, v);
  if (a.strings !== undefined) for (const v of a.strings) attribute.string(9, v);
  attribute.int(20, a.type);
}

/** Encodes a model as an ONNX file's bytes (fields in schema order). */
export function encodeOnnxModel(model: OnnxModel): Uint8Array {
  const w = new ProtoWriter();
  w.int(1, model.irVersion);
  w.string(2, model.producerName);
  w.string(3, model.producerVersion);
  w.message(7, (g) => writeGraph(g, model.graph));
  for (const o of model.opsets) w.message(8, (x) => x.string(1, o.domain).int(2, o.version));
  for (const [key, value] of Object.entries(model.metadata)) w.message(14, (x) => x.string(1, key).string(2, value));
  return w.finish();
}
