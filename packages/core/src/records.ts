/** Checks of values read from JSON and other untrusted data. */

/** True for a plain JSON object (not null, not an array): a value whose fields can be read by name. */
export function isRecord(value: unknown): value is Record<string, unknown> {
  return typeof value === 'object' && value !== null && !Array.isArray(value);
}
