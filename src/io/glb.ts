/**
 * The GLB container: checked parsing and assembly.
 * Based on: glTF 2.0 specification, section 4.4 (GLB file format: 12-byte header with magic
 * 'glTF', version 2 and total length; a JSON chunk first, padded with spaces; an optional BIN
 * chunk, padded with zeros; every chunk 4-byte aligned; little endian).
 *
 * Parsing checks the header and the chunk layout (so every fault gets a precise one-line
 * message), then decodes the JSON chunk as UTF-8 and parses it. Assembly writes the header,
 * the JSON chunk padded with spaces and the BIN chunk padded with zeros. (Both were once done
 * through a general glTF loader package; the container is small enough that our own code
 * does it exactly, and the package's weight is gone: see README, Install.)
 */
import { TanframeError } from '../mesh/errors.js';
import { MAX_JSON_DEPTH, checkJsonBudget, jsonParseReason } from './jsonBudget.js';

/** 'glTF' read as a little-endian uint32. Source: glTF 2.0 specification, 4.4.2. */
export const GLB_MAGIC = 0x46546c67;
/** Chunk type 'JSON'. Source: glTF 2.0 specification, 4.4.3.1. */
export const CHUNK_JSON = 0x4e4f534a;
/** Chunk type 'BIN\0'. Source: glTF 2.0 specification, 4.4.3.1. */
export const CHUNK_BIN = 0x004e4942;
const HEADER_BYTES = 12;
const CHUNK_HEADER_BYTES = 8;
/** GLB lengths are uint32. Source: glTF 2.0 specification, 4.4.2. */
const MAX_GLB_BYTES = 0xffffffff;

/** The two payloads of a GLB file. */
export interface GlbContents {
  /** The parsed JSON chunk. */
  json: any;
  /** The BIN chunk's data, or null when the file has none. */
  bin: Uint8Array | null;
}

/** Where a chunk's data lies in the file. */
interface ChunkSpan {
  type: number;
  start: number;
  length: number;
}

function bad(message: string): never {
  throw new TanframeError('bad-glb', message);
}

/** True when the bytes start with the GLB magic 'glTF'. */
export function looksLikeGlb(bytes: Uint8Array): boolean {
  return bytes.length >= 4 && bytes[0] === 0x67 && bytes[1] === 0x6c && bytes[2] === 0x54 && bytes[3] === 0x46;
}

/** Checks the 12-byte header: magic, version 2, declared length equal to the file size. */
function checkHeader(view: DataView, size: number): void {
  if (size < HEADER_BYTES) bad(`truncated: ${size} bytes, shorter than the 12-byte GLB header`);
  if (view.getUint32(0, true) !== GLB_MAGIC) bad("not a GLB: the file does not start with 'glTF'");
  const version = view.getUint32(4, true);
  if (version !== 2) bad(`GLB container version ${version} is not supported (only version 2)`);
  const declared = view.getUint32(8, true);
  if (declared > size) bad(`truncated: the header declares ${declared} bytes but the file has ${size}`);
  if (declared < size) bad(`the header declares ${declared} bytes but the file has ${size} (trailing data)`);
}

/** Walks the chunk list, checking that every chunk lies inside the file. */
function findChunks(view: DataView, size: number): ChunkSpan[] {
  const chunks: ChunkSpan[] = [];
  let offset = HEADER_BYTES;
  while (offset < size) {
    if (offset + CHUNK_HEADER_BYTES > size) bad(`truncated: ${size - offset} stray bytes where a chunk header should be`);
    const length = view.getUint32(offset, true);
    const type = view.getUint32(offset + 4, true);
    const start = offset + CHUNK_HEADER_BYTES;
    if (start + length > size) {
      bad(`truncated: chunk ${chunks.length} declares ${length} bytes but only ${size - start} remain`);
    }
    chunks.push({ type, start, length });
    offset = start + length + ((4 - (length % 4)) % 4);
  }
  return chunks;
}

/** Picks the JSON chunk (must come first) and the optional single BIN chunk. */
function pickChunks(chunks: ChunkSpan[]): { json: ChunkSpan; bin: ChunkSpan | null } {
  if (chunks.length === 0) bad('the file has no JSON chunk');
  if (chunks[0].type !== CHUNK_JSON) bad('the first chunk is not the JSON chunk');
  let bin: ChunkSpan | null = null;
  for (let i = 1; i < chunks.length; i++) {
    const t = chunks[i].type;
    if (t === CHUNK_JSON) bad('the file has more than one JSON chunk');
    if (t === CHUNK_BIN) {
      if (bin) bad('the file has more than one BIN chunk');
      bin = chunks[i];
    }
    // Some readers take chunk types 0 and 1 as JSON / BIN (an old convention); refuse them so
    // every reader sees the file as we checked it.
    if (t === 0 || t === 1) bad(`chunk ${i} has the reserved type ${t}`);
  }
  return { json: chunks[0], bin };
}

/**
 * Parses a GLB file: validates header and chunk layout, checks the JSON chunk is UTF-8 and
 * parses it. Returns the JSON (an object) and the BIN chunk bytes (a view into `bytes`).
 * Throws 'empty-file', 'bad-glb' or 'bad-json'.
 */
export function parseGlb(bytes: Uint8Array): GlbContents {
  if (bytes.length === 0) throw new TanframeError('empty-file', 'the file is empty (0 bytes)');
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  checkHeader(view, bytes.length);
  const { json: jsonSpan, bin: binSpan } = pickChunks(findChunks(view, bytes.length));
  if (jsonSpan.length === 0) bad('the JSON chunk is empty');
  const jsonBytes = bytes.subarray(jsonSpan.start, jsonSpan.start + jsonSpan.length);
  checkJsonBudget(jsonBytes, MAX_JSON_DEPTH, 'the JSON chunk');
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(jsonBytes);
  } catch {
    throw new TanframeError('bad-json', 'the JSON chunk is not valid UTF-8');
  }
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (err) {
    throw new TanframeError('bad-json', `the JSON chunk does not parse (${jsonParseReason(err)})`);
  }
  if (json === null || typeof json !== 'object' || Array.isArray(json)) {
    throw new TanframeError('bad-gltf', 'the JSON chunk is not a JSON object');
  }
  const bin = binSpan ? bytes.subarray(binSpan.start, binSpan.start + binSpan.length) : null;
  return { json, bin };
}

/**
 * Assembles a GLB from the glTF JSON object and the BIN payload (null or empty: no BIN
 * chunk). The BIN chunk is zero-padded, the JSON chunk space-padded, both to 4 bytes.
 * Deterministic: JSON.stringify keeps the object's key order. Throws 'too-large' when the
 * file would exceed the 4 GiB GLB limit.
 */
export function assembleGlb(json: object, bin: Uint8Array | null): Uint8Array {
  const length = bin === null ? 0 : bin.byteLength;
  return assembleGlbWith(json, length, (out, at) => { if (bin) out.set(bin, at); });
}

/**
 * Same as assembleGlb for a BIN chunk of `binLength` bytes that `writeBin(out, at)` writes
 * into the finished file at offset `at` (the file is zero-filled first), so a buffer made of
 * parts is placed once, straight into the file, instead of being joined and then copied.
 */
export function assembleGlbWith(json: object, binLength: number, writeBin: (out: Uint8Array, at: number) => void): Uint8Array {
  const head = glbHead(json, binLength);
  const out = new Uint8Array(head.total); // zero-filled: the BIN chunk's padding
  out.set(head.bytes, 0);
  if (binLength > 0) writeBin(out, head.bytes.byteLength);
  return out;
}

/** Zeros for the padding of parts (never written to). */
const ZERO_PADDING = new Uint8Array(4);

/**
 * The file assembleGlb makes, as parts in file order (their concatenation is that file, byte
 * for byte): the header, the JSON chunk and the BIN chunk's header in one new array, then the
 * `bin` parts themselves (not copied) and the BIN chunk's zero padding. For writing the file
 * without building it in memory. Throws 'too-large' past the 4 GiB GLB limit.
 */
export function glbParts(json: object, bin: Uint8Array[]): Uint8Array[] {
  let binLength = 0;
  for (const b of bin) binLength += b.byteLength;
  const head = glbHead(json, binLength);
  if (binLength === 0) return [head.bytes];
  const pad = head.total - head.bytes.byteLength - binLength;
  return pad > 0 ? [head.bytes, ...bin, ZERO_PADDING.subarray(0, pad)] : [head.bytes, ...bin];
}

/**
 * The bytes of a GLB before its BIN chunk's data (header, JSON chunk padded with spaces and,
 * with a BIN chunk, its 8-byte header) and the file's total length.
 */
function glbHead(json: object, binLength: number): { bytes: Uint8Array; total: number } {
  const jsonBytes = new TextEncoder().encode(JSON.stringify(json));
  const jsonPadded = jsonBytes.byteLength + ((4 - (jsonBytes.byteLength % 4)) % 4);
  const hasBin = binLength > 0;
  const binPadded = hasBin ? binLength + ((4 - (binLength % 4)) % 4) : 0;
  const total = HEADER_BYTES + CHUNK_HEADER_BYTES + jsonPadded + (hasBin ? CHUNK_HEADER_BYTES + binPadded : 0);
  if (total > MAX_GLB_BYTES) throw new TanframeError('too-large', 'the output exceeds the 4 GiB GLB size limit');
  const out = new Uint8Array(HEADER_BYTES + CHUNK_HEADER_BYTES + jsonPadded + (hasBin ? CHUNK_HEADER_BYTES : 0));
  const view = new DataView(out.buffer);
  view.setUint32(0, GLB_MAGIC, true);
  view.setUint32(4, 2, true);
  view.setUint32(8, total, true);
  view.setUint32(12, jsonPadded, true);
  view.setUint32(16, CHUNK_JSON, true);
  out.set(jsonBytes, 20);
  out.fill(0x20, 20 + jsonBytes.byteLength, 20 + jsonPadded);
  if (hasBin) {
    const at = 20 + jsonPadded;
    view.setUint32(at, binPadded, true);
    view.setUint32(at + 4, CHUNK_BIN, true);
  }
  return { bytes: out, total };
}
