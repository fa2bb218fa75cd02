/**
 * A small evaluator of ONNX graphs as protobufjs decodes them (independent.ts), for the operators weft writes for a
 * cell of your own: Shape, Gather, Concat, ConstantOfShape, Scan, MatMul, Add, Sub, Mul, Sigmoid, Tanh, Relu,
 * Slice and Identity. Written from the operators' definitions in ONNX's Operators.md (operator set 22; Scan's
 * loop, state and scan-output rules from memory of that document), in f64, sharing no code with weft. Shapes
 * follow ONNX's multidirectional (numpy) broadcasting where the operators allow it.
 */
export interface Value {
  dims: number[];
  data: number[];
}

type Proto = Record<string, unknown>;

const size = (dims: readonly number[]): number => dims.reduce((n, d) => n * d, 1);

/** A TensorProto (raw little-endian data, FLOAT or INT64) as a value. */
export function tensorValue(t: Proto): Value {
  const dims = ((t.dims as number[] | undefined) ?? []).map(Number);
  const bytes = Uint8Array.from((t.rawData as number[] | undefined) ?? []);
  const view = new DataView(bytes.buffer);
  const type = t.dataType as number;
  const data =
    type === 1
      ? Array.from({ length: bytes.length / 4 }, (_, i) => view.getFloat32(4 * i, true))
      : type === 7
        ? Array.from({ length: bytes.length / 8 }, (_, i) => Number(view.getBigInt64(8 * i, true)))
        : [];
  return { dims, data };
}

function attribute(node: Proto, name: string): Proto | undefined {
  return ((node.attribute as Proto[] | undefined) ?? []).find((a) => a.name === name);
}

/** Numpy broadcasting of two shapes; the element of each operand for every output index. */
function broadcast(op: (x: number, y: number) => number, a: Value, b: Value): Value {
  const rank = Math.max(a.dims.length, b.dims.length);
  const pad = (d: number[]): number[] => [...new Array<number>(rank - d.length).fill(1), ...d];
  const da = pad(a.dims);
  const db = pad(b.dims);
  const dims = da.map((n, i) => Math.max(n, db[i]));
  const data = new Array<number>(size(dims));
  for (let k = 0; k < data.length; k++) {
    let rest = k;
    let ia = 0;
    let ib = 0;
    let sa = 1;
    let sb = 1;
    for (let axis = rank - 1; axis >= 0; axis--) {
      const index = rest % dims[axis];
      rest = Math.floor(rest / dims[axis]);
      if (da[axis] !== 1) ia += index * sa;
      if (db[axis] !== 1) ib += index * sb;
      sa *= da[axis];
      sb *= db[axis];
    }
    data[k] = op(a.data[ia], b.data[ib]);
  }
  return { dims, data };
}

function matmul(a: Value, b: Value): Value {
  const k = b.dims[0];
  const n = b.dims[1];
  const rows = a.data.length / k;
  const data = new Array<number>(rows * n).fill(0);
  for (let r = 0; r < rows; r++) for (let j = 0; j < n; j++) for (let i = 0; i < k; i++) data[r * n + j] += a.data[r * k + i] * b.data[i * n + j];
  return { dims: [...a.dims.slice(0, -1), n], data };
}

function slice(x: Value, start: number, end: number, axis: number): Value {
  const a = axis < 0 ? axis + x.dims.length : axis;
  const outer = size(x.dims.slice(0, a));
  const inner = size(x.dims.slice(a + 1));
  const length = x.dims[a];
  const from = Math.max(0, Math.min(length, start < 0 ? start + length : start));
  const to = Math.max(from, Math.min(length, end < 0 ? end + length : end));
  const data: number[] = [];
  for (let o = 0; o < outer; o++) for (let i = from; i < to; i++) data.push(...x.data.slice((o * length + i) * inner, (o * length + i + 1) * inner));
  return { dims: x.dims.map((d, i) => (i === a ? to - from : d)), data };
}

function scan(node: Proto, inputs: Value[], scope: Map<string, Value>): Value[] {
  const body = attribute(node, 'body')!.g as Proto;
  const scanInputs = Number(attribute(node, 'num_scan_inputs')!.i);
  const stateCount = inputs.length - scanInputs;
  let state = inputs.slice(0, stateCount);
  const sequences = inputs.slice(stateCount);
  const steps = sequences[0].dims[0];
  const collected: Value[][] = [];
  const bodyInputs = (body.input as Proto[]).map((i) => i.name as string);
  const bodyOutputs = (body.output as Proto[]).map((o) => o.name as string);
  for (let t = 0; t < steps; t++) {
    const feeds = new Map(scope);
    state.forEach((v, i) => feeds.set(bodyInputs[i], v));
    sequences.forEach((sequence, i) => {
      const rest = sequence.dims.slice(1);
      feeds.set(bodyInputs[stateCount + i], { dims: rest, data: sequence.data.slice(t * size(rest), (t + 1) * size(rest)) });
    });
    const values = evaluateGraph(body, feeds);
    const outs = bodyOutputs.map((name) => values.get(name)!);
    state = outs.slice(0, stateCount);
    collected.push(outs.slice(stateCount));
  }
  const stacked = collected[0].map((first, k) => ({ dims: [steps, ...first.dims], data: collected.flatMap((outs) => outs[k].data) }));
  return [...state, ...stacked];
}

/** Runs `graph` from `feeds` (and its initializers); returns every value by name. */
export function evaluateGraph(graph: Proto, feeds: Map<string, Value>): Map<string, Value> {
  const values = new Map(feeds);
  for (const t of (graph.initializer as Proto[] | undefined) ?? []) values.set(t.name as string, tensorValue(t));
  for (const node of graph.node as Proto[]) {
    const inputs = (node.input as string[]).map((name) => values.get(name)!);
    const [a, b] = inputs;
    const unary = (f: (x: number) => number): Value => ({ dims: a.dims, data: a.data.map(f) });
    let outputs: Value[];
    switch (node.opType) {
      case 'Shape':
        outputs = [{ dims: [a.dims.length], data: [...a.dims] }];
        break;
      case 'Gather':
        outputs = [{ dims: b.dims, data: b.data.map((i) => a.data[i]) }];
        break;
      case 'Concat':
        outputs = [{ dims: [inputs.reduce((n, v) => n + v.data.length, 0)], data: inputs.flatMap((v) => v.data) }];
        break;
      case 'ConstantOfShape':
        outputs = [{ dims: [...a.data], data: new Array<number>(size(a.data)).fill(tensorValue(attribute(node, 'value')!.t as Proto).data[0]) }];
        break;
      case 'MatMul':
        outputs = [matmul(a, b)];
        break;
      case 'Add':
        outputs = [broadcast((x, y) => x + y, a, b)];
        break;
      case 'Sub':
        outputs = [broadcast((x, y) => x - y, a, b)];
        break;
      case 'Mul':
        outputs = [broadcast((x, y) => x * y, a, b)];
        break;
      case 'Sigmoid':
        outputs = [unary((x) => 1 / (1 + Math.exp(-x)))];
        break;
      case 'Tanh':
        outputs = [unary(Math.tanh)];
        break;
      case 'Relu':
        outputs = [unary((x) => Math.max(0, x))];
        break;
      case 'Identity':
        outputs = [a];
        break;
      case 'Slice':
        outputs = [slice(a, b.data[0], inputs[2].data[0], inputs[3].data[0])];
        break;
      case 'Scan':
        outputs = scan(node, inputs, values);
        break;
      default:
        throw new Error(`the evaluator does not run ${String(node.opType)}`);
    }
    (node.output as string[]).forEach((name, i) => values.set(name, outputs[i]));
  }
  return values;
}
