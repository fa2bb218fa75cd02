/**
 * The protocol-buffer wire format (protobuf encoding documentation: varints, wire types 0 varint, 1 64-bit,
 * 2 length-delimited, 5 32-bit), read and written for just what ONNX files use. Our own small codec rather than
 * a general protobuf library: a few hundred lines, no dependency in a browser-safe package, and every limit
 * checked before anything is allocated (a length or count that reaches past the end of the bytes is an error
 * naming the byte offset, never a large allocation). The tests decode the same files with a general-purpose
 * library and ONNX's published schema, so this reader is not checked only against itself.
 */
import { fail } from '@weft/core';

/** One field as it appears on the wire: its number, wire type, byte offset and value. */
export interface WireField {
  /** The field number. */
  readonly number: number;
  /** 0 varint, 1 64-bit, 2 length-delimited, 5 32-bit. */
  readonly wire: number;
  /** Byte offset of the field's key in the whole input. */
  readonly at: number;
  /** A varint as a BigInt (wire 0); the bytes (wire 2, a view, not a copy); the raw 8 or 4 bytes (wires 1, 5). */
  readonly value: bigint | Uint8Array;
}

const wireNames = ['varint', '64-bit', 'length-delimited', 'group start', 'group end', '32-bit'];

/** The fields of one message in `bytes` (which starts at `offset` in the whole input), in order. */
export function readFields(bytes: Uint8Array, offset: number, path: string): WireField[] {
  const fields: WireField[] = [];
  let i = 0;
  const varint = (): bigint => {
    let result = 0n;
    let shift = 0n;
    for (let n = 0; n < 10; n++) {
      if (i >= bytes.length) fail('bad_data', `${path} @${offset + i}`, 'a complete varint', 'the end of the bytes (the file is cut short)');
      const byte = bytes[i++];
      result |= BigInt(byte & 0x7f) << shift;
      if ((byte & 0x80) === 0) return result;
      shift += 7n;
    }
    fail('bad_data', `${path} @${offset + i}`, 'a varint of at most 10 bytes', 'a longer one');
  };
  while (i < bytes.length) {
    const at = offset + i;
    const key = varint();
    const number = Number(key >> 3n);
    const wire = Number(key & 7n);
    if (number < 1 || number > 536870911) fail('bad_data', `${path} @${at}`, 'a field number from 1 to 2^29 − 1', String(number));
    if (wire === 0) {
      fields.push({ number, wire, at, value: varint() });
    } else if (wire === 2) {
      const length = varint();
      if (length > BigInt(bytes.length - i)) {
        fail(
          'bad_data',
          `${path} @${at}`,
          `a field of at most ${bytes.length - i} bytes (what is left)`,
          `a length of ${length} (field ${number}; the file is cut short or damaged)`,
        );
      }
      const value = bytes.subarray(i, i + Number(length));
      i += Number(length);
      fields.push({ number, wire, at, value });
    } else if (wire === 1 || wire === 5) {
      const size = wire === 1 ? 8 : 4;
      if (i + size > bytes.length) fail('bad_data', `${path} @${at}`, `${size} bytes for field ${number}`, 'the end of the bytes (the file is cut short)');
      fields.push({ number, wire, at, value: bytes.subarray(i, i + size) });
      i += size;
    } else {
      fail('bad_data', `${path} @${at}`, 'wire type 0, 1, 2 or 5', `${wireNames[wire] ?? 'unknown'} (${wire}) for field ${number}`);
    }
  }
  return fields;
}

/** Refuses a field whose wire type is not the one the schema gives it. */
export function requireWire(field: WireField, wire: number, path: string, name: string): void {
  if (field.wire !== wire) {
    fail(
      'bad_data',
      `${path}.${name} @${field.at}`,
      `wire type ${wire} (${wireNames[wire]})`,
      `wire type ${field.wire} (${wireNames[field.wire] ?? 'unknown'})`,
    );
  }
}

/** A varint field as a signed 64-bit integer, refused where it is beyond ±2^53. */
export function int64Of(field: WireField, path: string, name: string): number {
  requireWire(field, 0, path, name);
  return safe(BigInt.asIntN(64, field.value as bigint), `${path}.${name} @${field.at}`);
}

function safe(value: bigint, where: string): number {
  if (value > BigInt(Number.MAX_SAFE_INTEGER) || value < BigInt(Number.MIN_SAFE_INTEGER)) fail('bad_data', where, 'an integer within ±2^53', String(value));
  return Number(value);
}

/** A packed or unpacked repeated int64 field (wire 2 holding varints, or one varint). */
export function int64sOf(field: WireField, path: string, name: string): number[] {
  if (field.wire === 0) return [int64Of(field, path, name)];
  requireWire(field, 2, path, name);
  return readPackedVarints(field.value as Uint8Array, field.at, `${path}.${name}`);
}

/**
 * Packed varints as signed 64-bit integers, each within ±2^53 (else an error): one number per value, computed in
 * plain arithmetic for varints of up to 7 bytes (49 bits: exact), through BigInt only for longer ones (negative
 * values take 10 bytes), so a large tensor costs 8 bytes a value, not a BigInt object each.
 */
function readPackedVarints(bytes: Uint8Array, at: number, path: string): number[] {
  let count = 0;
  for (let i = 0; i < bytes.length; i++) if ((bytes[i] & 0x80) === 0) count++;
  if (bytes.length > 0 && (bytes[bytes.length - 1] & 0x80) !== 0) fail('bad_data', `${path} @${at}`, 'complete packed varints', 'a varint cut short');
  const out = new Array<number>(count);
  let start = 0;
  for (let k = 0; k < count; k++) {
    let end = start;
    while ((bytes[end] & 0x80) !== 0) end++;
    const length = end - start + 1;
    if (length > 10) fail('bad_data', `${path} @${at}`, 'packed varints of at most 10 bytes', 'a longer one');
    if (length <= 7) {
      let value = 0;
      for (let i = end; i >= start; i--) value = value * 128 + (bytes[i] & 0x7f);
      out[k] = value;
    } else {
      let value = 0n;
      for (let i = end; i >= start; i--) value = (value << 7n) | BigInt(bytes[i] & 0x7f);
      out[k] = safe(BigInt.asIntN(64, value), `${path} @${at}`);
    }
    start = end + 1;
  }
  return out;
}

const decoder = new TextDecoder('utf-8', { fatal: true });

/** A length-delimited field as UTF-8 text. */
export function stringOf(field: WireField, path: string, name: string): string {
  requireWire(field, 2, path, name);
  try {
    return decoder.decode(field.value as Uint8Array);
  } catch {
    fail('bad_data', `${path}.${name} @${field.at}`, 'UTF-8 text', 'bytes that are not UTF-8');
  }
}

/** A length-delimited field's bytes (a view into the input). */
export function bytesOf(field: WireField, path: string, name: string): Uint8Array {
  requireWire(field, 2, path, name);
  return field.value as Uint8Array;
}

/** A 32-bit float field (wire 5), or a packed run of them (wire 2). */
export function floatsOf(field: WireField, path: string, name: string): Float32Array {
  if (field.wire === 5) return new Float32Array(littleEndian(field.value as Uint8Array, 4).buffer);
  requireWire(field, 2, path, name);
  const bytes = field.value as Uint8Array;
  if (bytes.length % 4 !== 0) fail('bad_data', `${path}.${name} @${field.at}`, 'a multiple of 4 bytes of packed floats', `${bytes.length} bytes`);
  return new Float32Array(littleEndian(bytes, 4).buffer);
}

/** A copy of `bytes` in an aligned buffer, read as little-endian words of `size` bytes on any platform. */
export function littleEndian(bytes: Uint8Array, size: number): Uint8Array {
  const copy = new Uint8Array(bytes.length);
  copy.set(bytes);
  if (new Uint8Array(Uint16Array.of(1).buffer)[0] === 0) {
    for (let i = 0; i < copy.length; i += size) copy.subarray(i, i + size).reverse();
  }
  return copy;
}

/** Writes protobuf messages: fields appended in the order given, nested messages as their bytes. */
export class ProtoWriter {
  private readonly parts: Uint8Array[] = [];
  private length = 0;

  private push(bytes: Uint8Array): void {
    this.parts.push(bytes);
    this.length += bytes.length;
  }

  private varintBytes(value: bigint): Uint8Array {
    let v = BigInt.asUintN(64, value);
    const out: number[] = [];
    do {
      let byte = Number(v & 0x7fn);
      v >>= 7n;
      if (v !== 0n) byte |= 0x80;
      out.push(byte);
    } while (v !== 0n);
    return Uint8Array.from(out);
  }

  private key(number: number, wire: number): void {
    this.push(this.varintBytes(BigInt(number) * 8n + BigInt(wire)));
  }

  /** An integer field (int32, int64, enum), negative numbers as 10-byte two's complement. */
  int(number: number, value: number): this {
    this.key(number, 0);
    this.push(this.varintBytes(BigInt(value)));
    return this;
  }

  /** Repeated integers, packed. */
  ints(number: number, values: readonly number[]): this {
    const inner = new ProtoWriter();
    for (const v of values) inner.push(inner.varintBytes(BigInt(v)));
    return this.bytes(number, inner.finish());
  }

  /** A 32-bit float field. */
  float(number: number, value: number): this {
    this.key(number, 5);
    this.push(littleEndian(new Uint8Array(Float32Array.of(value).buffer), 4));
    return this;
  }

  /** Repeated floats, packed. */
  floats(number: number, values: ArrayLike<number>): this {
    return this.bytes(number, littleEndian(new Uint8Array(Float32Array.from(values).buffer), 4));
  }

  /** A length-delimited field. */
  bytes(number: number, value: Uint8Array): this {
    this.key(number, 2);
    this.push(this.varintBytes(BigInt(value.length)));
    this.push(value);
    return this;
  }

  /** A UTF-8 string field. */
  string(number: number, value: string): this {
    return this.bytes(number, new TextEncoder().encode(value));
  }

  /** A nested message. */
  message(number: number, write: (writer: ProtoWriter) => void): this {
    const inner = new ProtoWriter();
    write(inner);
    return this.bytes(number, inner.finish());
  }

  /** The message's bytes. */
  finish(): Uint8Array {
    const out = new Uint8Array(this.length);
    let at = 0;
    for (const part of this.parts) {
      out.set(part, at);
      at += part.length;
    }
    return out;
  }
}
