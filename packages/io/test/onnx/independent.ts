/**
 * The independent route: ONNX files decoded by protobufjs (a general-purpose protocol-buffer library) with ONNX's
 * published schema, tests/fixtures/onnx/onnx.proto (Apache 2.0), so our decoder and encoder are checked against
 * something that shares no code with them.
 */
import { fileURLToPath } from 'node:url';
import protobuf from 'protobufjs';

const schema = fileURLToPath(new URL('../../../../tests/fixtures/onnx/onnx.proto', import.meta.url));
const root = protobuf.loadSync(schema);

/** A ModelProto (or TensorProto) as plain data: field names in protobufjs's camelCase, int64 as numbers, bytes as arrays. */
export function decodeIndependently(bytes: Uint8Array, message: 'onnx.ModelProto' | 'onnx.TensorProto' = 'onnx.ModelProto'): Record<string, unknown> {
  const type = root.lookupType(message);
  return type.toObject(type.decode(bytes), { longs: Number, bytes: Array, defaults: false, enums: Number }) as Record<string, unknown>;
}

/** The float32 values of a TensorProto decoded by protobufjs (raw_data little-endian, or float_data). */
export function floatsOfIndependent(t: Record<string, unknown>): number[] {
  if (Array.isArray(t.rawData)) {
    const bytes = Uint8Array.from(t.rawData as number[]);
    const view = new DataView(bytes.buffer);
    return Array.from({ length: bytes.length / 4 }, (_, i) => view.getFloat32(4 * i, true));
  }
  return (t.floatData as number[] | undefined) ?? [];
}
