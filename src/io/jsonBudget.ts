/**
 * A pre-scan of JSON text that bounds what parsing it will cost, before it is parsed.
 * Based on: RFC 8259 (JSON: objects, arrays, strings with backslash escapes, numbers,
 * literals), and the memory V8's JSON.parse takes per value, measured with Node 20 on a
 * million copies of each: an empty object 56 bytes, an empty array 32, an array element or
 * property slot 8, a number or short string at most 16 (our measurement, rounded up).
 *
 * Text made of many tiny values ("[{},{},...]", 3 bytes per object) would otherwise cost
 * about 19 times its size to parse, and as much again for every copy made of it. The scan
 * reads each byte once and allocates nothing; it also measures the nesting depth, so deep
 * nesting is refused without walking a parsed tree.
 */
import { TanframeError } from '../mesh/errors.js';

/**
 * Deepest JSON nesting accepted. glTF documents nest a few levels (extras a few more); far
 * deeper input is hostile and would exhaust the stack when the writer copies or serialises it.
 * Common practice (a resource limit).
 */
export const MAX_JSON_DEPTH = 512;

/** Estimated heap bytes per object, array, and other value (number, string, literal, key). */
const OBJECT_BYTES = 56;
const ARRAY_BYTES = 32;
const VALUE_BYTES = 16;

/**
 * Parsed JSON may take at most JSON_HEAP_BASE + JSON_HEAP_FACTOR x its text's bytes (by the
 * estimate above, which rounds every value up). glTF JSON written by exporters estimates at 2
 * to 5 times its size (accessors, materials and nodes of tens of bytes per object; the Khronos
 * samples hold one object or array per 37 to 65 bytes), a minified list of nodes such as
 * {"mesh":0} at under 10; text denser in tiny values ([{},{},...]: 24) is refused with
 * 'too-large'. Our choice.
 */
export const JSON_HEAP_FACTOR = 12;
/** See JSON_HEAP_FACTOR: small files may be dense. */
export const JSON_HEAP_BASE = 64 * 1024 * 1024;

/** Counts the scan found. */
export interface JsonCounts {
  objects: number;
  arrays: number;
  /** Strings (keys included), numbers and literals. */
  values: number;
  /** Deepest nesting of objects and arrays. */
  depth: number;
}

/** Counts the values and nesting of JSON text (bytes, UTF-8) in one pass. Malformed text is scanned as far as it goes. */
export function scanJson(bytes: Uint8Array, maxDepth: number): JsonCounts {
  let objects = 0, arrays = 0, values = 0, depth = 0, deepest = 0;
  const n = bytes.length;
  let i = 0;
  while (i < n) {
    const c = bytes[i];
    if (c === 0x22) {
      // A string: skip to the closing quote, over escapes.
      values++;
      i++;
      while (i < n && bytes[i] !== 0x22) i += bytes[i] === 0x5c ? 2 : 1;
      i++;
    } else if (c === 0x7b || c === 0x5b) {
      if (c === 0x7b) objects++;
      else arrays++;
      if (++depth > deepest) {
        deepest = depth;
        if (deepest > maxDepth) break;
      }
      i++;
    } else if (c === 0x7d || c === 0x5d) {
      depth--;
      i++;
    } else if (c === 0x2d || (c >= 0x30 && c <= 0x39) || c === 0x74 || c === 0x66 || c === 0x6e) {
      // A number or a literal (true, false, null): one value up to the next delimiter.
      values++;
      i++;
      while (i < n) {
        const d = bytes[i];
        if (d === 0x2c || d === 0x7d || d === 0x5d || d === 0x3a || d === 0x20 || d === 0x0a || d === 0x0d || d === 0x09 || d === 0x22) break;
        i++;
      }
    } else {
      i++;
    }
  }
  return { objects, arrays, values, depth: deepest };
}

/**
 * Checks JSON text before it is parsed: nesting deeper than `maxDepth` is 'bad-json'; an
 * estimated parsed size past JSON_HEAP_BASE + JSON_HEAP_FACTOR x its bytes is 'too-large'.
 * `what` names the text in messages ("the JSON", "the JSON chunk").
 */
export function checkJsonBudget(bytes: Uint8Array, maxDepth: number, what: string): void {
  const c = scanJson(bytes, maxDepth);
  if (c.depth > maxDepth) throw new TanframeError('bad-json', `${what} nests deeper than ${maxDepth} levels`);
  const estimate = c.objects * OBJECT_BYTES + c.arrays * ARRAY_BYTES + (c.values + c.objects + c.arrays) * VALUE_BYTES;
  const budget = JSON_HEAP_BASE + JSON_HEAP_FACTOR * bytes.byteLength;
  if (estimate > budget) {
    throw new TanframeError(
      'too-large',
      `${what} holds ${c.objects + c.arrays + c.values} values in ${bytes.byteLength} bytes; parsing it would take about ${Math.round(estimate / (1024 * 1024))} MiB, past the limit of ${Math.round(budget / (1024 * 1024))} MiB for text of this size`,
    );
  }
}

/**
 * A one-line reason for a JSON.parse failure that never quotes the text (V8's messages quote
 * the bytes around the fault, which may be anything): the character position when known.
 */
export function jsonParseReason(err: unknown): string {
  const m = /at position (\d+)/.exec(String((err as Error)?.message ?? ''));
  return m ? `at character ${m[1]}` : 'malformed JSON';
}
