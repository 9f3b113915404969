/**
 * The GLB container: checked parsing and assembly.
 * Based on: glTF 2.0 specification, section 4.4 (GLB file format: 12-byte header with magic
 * 'glTF', version 2 and total length; a JSON chunk first, padded with spaces; an optional BIN
 * chunk, padded with zeros; every chunk 4-byte aligned; little endian).
 *
 * Parsing runs our own header and chunk checks first (so every fault gets a precise one-line
 * message), then hands the bytes to loaders.gl's GLBLoader (`parseSync`) and wraps anything it
 * throws. Assembly uses loaders.gl's GLBWriter (`encodeSync`): it pads the JSON chunk with
 * spaces; it would pad the BIN chunk with spaces too, which the specification forbids, so we
 * hand it a BIN payload already zero-padded to a multiple of 4 and it adds no padding.
 */
import { encodeSync, parseSync } from '@loaders.gl/core';
import { GLBLoader, GLBWriter } from '@loaders.gl/gltf';
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
    // loaders.gl reads chunk types 0 and 1 as JSON / BIN (an old convention); refuse them
    // so what it parses is exactly what we checked.
    if (t === 0 || t === 1) bad(`chunk ${i} has the reserved type ${t}`);
  }
  return { json: chunks[0], bin };
}

/** A standalone ArrayBuffer holding exactly `bytes` (no copy when it already is one). */
function exactArrayBuffer(bytes: Uint8Array): ArrayBuffer {
  if (bytes.byteOffset === 0 && bytes.byteLength === bytes.buffer.byteLength && bytes.buffer instanceof ArrayBuffer) {
    return bytes.buffer;
  }
  return bytes.slice().buffer as ArrayBuffer;
}

/** Runs loaders.gl's GLBLoader and maps its failures to our codes. */
function parseWithLoader(buffer: ArrayBuffer): { json: unknown; binChunks: { byteOffset: number; byteLength: number }[] } {
  try {
    return parseSync(buffer, GLBLoader) as any;
  } catch (err) {
    if (err instanceof SyntaxError) throw new TanframeError('bad-json', `the JSON chunk does not parse (${jsonParseReason(err)})`);
    throw new TanframeError('bad-glb', 'the GLB container does not parse');
  }
}

/**
 * Parses a GLB file: validates header and chunk layout, checks the JSON chunk is UTF-8,
 * then parses through loaders.gl. Returns the JSON (an object) and the BIN chunk bytes
 * (a view into `bytes`' buffer or a copy). Throws 'empty-file', 'bad-glb' or 'bad-json'.
 */
export function parseGlb(bytes: Uint8Array): GlbContents {
  if (bytes.length === 0) throw new TanframeError('empty-file', 'the file is empty (0 bytes)');
  const buffer = exactArrayBuffer(bytes);
  const view = new DataView(buffer);
  checkHeader(view, bytes.length);
  const { json: jsonSpan, bin: binSpan } = pickChunks(findChunks(view, bytes.length));
  try {
    new TextDecoder('utf-8', { fatal: true }).decode(new Uint8Array(buffer, jsonSpan.start, jsonSpan.length));
  } catch {
    throw new TanframeError('bad-json', 'the JSON chunk is not valid UTF-8');
  }
  checkJsonBudget(new Uint8Array(buffer, jsonSpan.start, jsonSpan.length), MAX_JSON_DEPTH, 'the JSON chunk');
  const parsed = parseWithLoader(buffer);
  if (parsed.json === null || typeof parsed.json !== 'object' || Array.isArray(parsed.json)) {
    throw new TanframeError('bad-gltf', 'the JSON chunk is not a JSON object');
  }
  const chunk = parsed.binChunks[0];
  if ((chunk ? 1 : 0) !== (binSpan ? 1 : 0) || (chunk && binSpan && chunk.byteOffset !== binSpan.start)) {
    throw new TanframeError('internal', 'GLB parser disagrees about the BIN chunk');
  }
  const bin = binSpan ? new Uint8Array(buffer, binSpan.start, binSpan.length) : null;
  return { json: parsed.json, bin };
}

/**
 * Assembles a GLB from the glTF JSON object and the BIN payload (null or empty: no BIN
 * chunk). The BIN chunk is zero-padded, the JSON chunk space-padded, both to 4 bytes.
 * Deterministic: JSON.stringify keeps the object's key order. Throws 'too-large' when the
 * file would exceed the 4 GiB GLB limit.
 */
export function assembleGlb(json: object, bin: Uint8Array | null): Uint8Array {
  let binary: ArrayBuffer | undefined;
  if (bin && bin.byteLength > 0) {
    const padded = new Uint8Array(bin.byteLength + ((4 - (bin.byteLength % 4)) % 4));
    padded.set(bin);
    binary = padded.buffer;
  }
  const jsonBytes = new TextEncoder().encode(JSON.stringify(json)).byteLength;
  const total = HEADER_BYTES + CHUNK_HEADER_BYTES + jsonBytes + 3 + (binary ? CHUNK_HEADER_BYTES + binary.byteLength : 0);
  if (total > MAX_GLB_BYTES) throw new TanframeError('too-large', 'the output exceeds the 4 GiB GLB size limit');
  const out = encodeSync({ json, binary } as any, GLBWriter);
  return new Uint8Array(out);
}
