/**
 * glTF accessors: structural checks, bounds checks and decoding into dense typed arrays.
 * Based on: glTF 2.0 specification, 3.6.2 (accessors: data types, sparse accessors, data
 * alignment incl. matrix column padding, bounds formula) and 3.6.1 (buffer views, byteStride).
 *
 * Every size is checked against the buffer view before anything is allocated, and all
 * decoding draws from a byte budget proportional to the input size, so a small hostile file
 * cannot make us allocate unbounded memory.
 */
import {
  BYTE,
  FLOAT,
  SHORT,
  UNSIGNED_BYTE,
  UNSIGNED_INT,
  UNSIGNED_SHORT,
  type ComponentArray,
} from '../mesh/asset.js';
import { TanframeError } from '../mesh/errors.js';

/** Bytes per component. Source: glTF 2.0 specification, 3.6.2.2 (accessor data types). */
export const COMPONENT_BYTES: Readonly<Record<number, number>> = {
  [BYTE]: 1,
  [UNSIGNED_BYTE]: 1,
  [SHORT]: 2,
  [UNSIGNED_SHORT]: 2,
  [UNSIGNED_INT]: 4,
  [FLOAT]: 4,
};

/** Components per element. Source: glTF 2.0 specification, 3.6.2.2. */
export const TYPE_COMPONENTS: Readonly<Record<string, number>> = {
  SCALAR: 1,
  VEC2: 2,
  VEC3: 3,
  VEC4: 4,
  MAT2: 4,
  MAT3: 9,
  MAT4: 16,
};

/**
 * Decoding may allocate at most DECODE_BUDGET_BASE + DECODE_BUDGET_FACTOR x input bytes.
 * Dense decoding of stored data never exceeds the stored size, so this only trips on files
 * that expand through zero-filled or sparse accessors or many accessors over one view.
 * Common practice (a resource limit, not a measurement).
 */
export const DECODE_BUDGET_BASE = 256 * 1024 * 1024;
/** See DECODE_BUDGET_BASE. */
export const DECODE_BUDGET_FACTOR = 8;

/** Remaining bytes decoding may allocate. */
export interface DecodeBudget {
  remaining: number;
  limit: number;
}

/** Sparse substitution of an accessor. */
export interface SparseSpec {
  count: number;
  indicesView: number;
  indicesOffset: number;
  indicesComponentType: number;
  valuesView: number;
  valuesOffset: number;
}

/** A checked accessor: every field valid and in range of its buffer view. */
export interface AccessorSpec {
  index: number;
  componentType: number;
  type: string;
  itemSize: number;
  normalized: boolean;
  count: number;
  bufferView: number | null;
  byteOffset: number;
  sparse: SparseSpec | null;
}

/** The checked buffer views an accessor reads: bytes of each view and its byteStride. */
export interface ViewTable {
  bytes: Uint8Array[];
  strides: (number | undefined)[];
}

/** Column layout of an element: matrices of 1- and 2-byte components pad columns to 4 bytes. */
export interface ElementLayout {
  cols: number;
  /** Data bytes per column. */
  colBytes: number;
  /** Bytes from one column's start to the next. */
  colStride: number;
}

const LITTLE_ENDIAN_HOST = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1;

function badAccessor(index: number, why: string): never {
  throw new TanframeError('bad-accessor', `accessor ${index}: ${why}`);
}

/** True for a non-negative safe integer. */
export function isIndex(v: unknown): v is number {
  return typeof v === 'number' && Number.isSafeInteger(v) && v >= 0;
}

/** Element layout per glTF 2.0 specification, 3.6.2.4 (matrix columns start 4-byte aligned). */
export function elementLayout(type: string, componentType: number): ElementLayout {
  const size = COMPONENT_BYTES[componentType];
  const rows = type === 'MAT2' ? 2 : type === 'MAT3' ? 3 : type === 'MAT4' ? 4 : 0;
  if (rows === 0) {
    const bytes = TYPE_COMPONENTS[type] * size;
    return { cols: 1, colBytes: bytes, colStride: bytes };
  }
  const colBytes = rows * size;
  return { cols: rows, colBytes, colStride: (colBytes + 3) & ~3 };
}

/** Bytes one element occupies when tightly packed (matrix padding included). */
export function packedElementBytes(type: string, componentType: number): number {
  const l = elementLayout(type, componentType);
  return l.cols * l.colStride;
}

/** Bytes `count` elements need at `stride` (the last element may omit trailing column padding). */
function extent(l: ElementLayout, count: number, stride: number): number {
  if (count === 0) return 0;
  return stride * (count - 1) + (l.cols - 1) * l.colStride + l.colBytes;
}

/** Reads and checks the `sparse` object of accessor `index`. */
function readSparse(index: number, sparse: any, count: number, viewCount: number): SparseSpec {
  if (sparse === null || typeof sparse !== 'object') badAccessor(index, 'sparse is not an object');
  if (!isIndex(sparse.count) || sparse.count < 1 || sparse.count > count) {
    badAccessor(index, `sparse.count ${JSON.stringify(sparse.count)} must be between 1 and the accessor count ${count}`);
  }
  const ind = sparse.indices;
  const val = sparse.values;
  if (!ind || typeof ind !== 'object' || !val || typeof val !== 'object') badAccessor(index, 'sparse needs indices and values');
  for (const [name, o] of [['indices', ind], ['values', val]] as const) {
    if (!isIndex(o.bufferView) || o.bufferView >= viewCount) badAccessor(index, `sparse.${name}.bufferView ${JSON.stringify(o.bufferView)} does not exist`);
    if (o.byteOffset !== undefined && !isIndex(o.byteOffset)) badAccessor(index, `sparse.${name}.byteOffset is not a non-negative integer`);
  }
  const ct = ind.componentType;
  if (ct !== UNSIGNED_BYTE && ct !== UNSIGNED_SHORT && ct !== UNSIGNED_INT) {
    badAccessor(index, `sparse.indices.componentType ${JSON.stringify(ct)} must be unsigned byte, short or int`);
  }
  return {
    count: sparse.count,
    indicesView: ind.bufferView,
    indicesOffset: ind.byteOffset ?? 0,
    indicesComponentType: ct,
    valuesView: val.bufferView,
    valuesOffset: val.byteOffset ?? 0,
  };
}

/** Reads and checks accessor fields (types, counts, references), without touching data. */
function readAccessorFields(json: any, index: number, viewCount: number): AccessorSpec {
  const list = json.accessors;
  if (!Array.isArray(list) || !isIndex(index) || index >= list.length) {
    throw new TanframeError('bad-accessor', `accessor ${index} does not exist (the file has ${Array.isArray(list) ? list.length : 0})`);
  }
  const a = list[index];
  if (a === null || typeof a !== 'object' || Array.isArray(a)) badAccessor(index, 'is not an object');
  const componentType = a.componentType;
  if (typeof componentType !== 'number' || !Object.hasOwn(COMPONENT_BYTES, componentType)) badAccessor(index, `componentType ${JSON.stringify(componentType)} is not a glTF component type`);
  if (typeof a.type !== 'string' || !Object.hasOwn(TYPE_COMPONENTS, a.type)) badAccessor(index, `type ${JSON.stringify(a.type)} is not a glTF accessor type`);
  // glTF requires count >= 1, but exporters write count 0 for empty meshes; such an accessor
  // holds no data and reads as empty (an empty primitive is skipped and reported, not refused).
  if (!isIndex(a.count)) badAccessor(index, `count ${JSON.stringify(a.count)} is not a non-negative integer`);
  const normalized = a.normalized === undefined ? false : a.normalized;
  if (typeof normalized !== 'boolean') badAccessor(index, 'normalized is not a boolean');
  // Source: glTF 2.0 specification, accessor.normalized: MUST NOT be true for FLOAT or UNSIGNED_INT.
  if (normalized && (componentType === FLOAT || componentType === UNSIGNED_INT)) {
    badAccessor(index, 'normalized must not be true for float or unsigned int components');
  }
  const byteOffset = a.byteOffset === undefined ? 0 : a.byteOffset;
  if (!isIndex(byteOffset)) badAccessor(index, 'byteOffset is not a non-negative integer');
  let bufferView: number | null = null;
  if (a.bufferView !== undefined) {
    if (!isIndex(a.bufferView) || a.bufferView >= viewCount) badAccessor(index, `bufferView ${JSON.stringify(a.bufferView)} does not exist`);
    bufferView = a.bufferView;
  } else if (byteOffset !== 0) {
    badAccessor(index, 'has a byteOffset but no bufferView');
  }
  const sparse = a.sparse === undefined ? null : readSparse(index, a.sparse, a.count, viewCount);
  return { index, componentType, type: a.type, itemSize: TYPE_COMPONENTS[a.type], normalized, count: a.count, bufferView, byteOffset, sparse };
}

/** Stride between elements: byteStride for vertex attributes, else tightly packed. */
function strideOf(spec: AccessorSpec, views: ViewTable, vertexAttribute: boolean): number {
  const packed = packedElementBytes(spec.type, spec.componentType);
  const declared = spec.bufferView === null ? undefined : views.strides[spec.bufferView];
  if (!vertexAttribute || declared === undefined) return packed;
  if (declared < packed) badAccessor(spec.index, `bufferView ${spec.bufferView} byteStride ${declared} is smaller than the element size ${packed}`);
  return declared;
}

/** Checks that the accessor's data (and sparse data) fits inside the buffer views. */
function checkBounds(spec: AccessorSpec, views: ViewTable, vertexAttribute: boolean): void {
  const l = elementLayout(spec.type, spec.componentType);
  if (spec.bufferView !== null) {
    const viewLength = views.bytes[spec.bufferView].byteLength;
    const need = spec.byteOffset + extent(l, spec.count, strideOf(spec, views, vertexAttribute));
    if (need > viewLength) {
      badAccessor(spec.index, `needs ${need} bytes (offset ${spec.byteOffset}, ${spec.count} elements) but bufferView ${spec.bufferView} has ${viewLength}`);
    }
  }
  const sp = spec.sparse;
  if (sp) {
    const indLength = views.bytes[sp.indicesView].byteLength;
    const indNeed = sp.indicesOffset + sp.count * COMPONENT_BYTES[sp.indicesComponentType];
    if (indNeed > indLength) badAccessor(spec.index, `sparse indices need ${indNeed} bytes but bufferView ${sp.indicesView} has ${indLength}`);
    const valLength = views.bytes[sp.valuesView].byteLength;
    const valNeed = sp.valuesOffset + extent(l, sp.count, l.cols * l.colStride);
    if (valNeed > valLength) badAccessor(spec.index, `sparse values need ${valNeed} bytes but bufferView ${sp.valuesView} has ${valLength}`);
  }
}

/**
 * Reads and fully checks accessor `index` (fields, references, bounds against its buffer
 * views, sparse data included). `vertexAttribute` selects whether bufferView.byteStride
 * applies (glTF: only vertex attributes are strided). Throws 'bad-accessor'.
 */
export function checkAccessor(json: any, index: number, views: ViewTable, vertexAttribute: boolean): AccessorSpec {
  const spec = readAccessorFields(json, index, views.bytes.length);
  checkBounds(spec, views, vertexAttribute);
  return spec;
}

/** Takes `bytes` from the budget or throws 'too-large'. */
export function chargeBudget(budget: DecodeBudget, bytes: number, what: string): void {
  budget.remaining -= bytes;
  if (budget.remaining < 0) {
    const mib = Math.round(budget.limit / (1024 * 1024));
    throw new TanframeError('too-large', `${what} would take decoded data past ${mib} MiB, the limit for an input of this size`);
  }
}

/** A typed array of `componentType` over `buffer` from `byteOffset` (a multiple of the component size). */
function typedArrayOf(componentType: number, buffer: ArrayBuffer, byteOffset: number, length: number): ComponentArray {
  switch (componentType) {
    case BYTE:
      return new Int8Array(buffer, byteOffset, length);
    case UNSIGNED_BYTE:
      return new Uint8Array(buffer, byteOffset, length);
    case SHORT:
      return new Int16Array(buffer, byteOffset, length);
    case UNSIGNED_SHORT:
      return new Uint16Array(buffer, byteOffset, length);
    case UNSIGNED_INT:
      return new Uint32Array(buffer, byteOffset, length);
    default:
      return new Float32Array(buffer, byteOffset, length);
  }
}

/** Copies `count` elements from `src` (at `offset`, `stride` apart) densely into `out`. */
function copyElements(out: Uint8Array, src: Uint8Array, offset: number, stride: number, count: number, l: ElementLayout): void {
  const dense = l.cols * l.colBytes;
  if (stride === dense && l.colStride === l.colBytes) {
    out.set(src.subarray(offset, offset + count * dense));
    return;
  }
  const cols = l.cols;
  const colBytes = l.colBytes;
  const colStride = l.colStride;
  let d = 0;
  for (let i = 0; i < count; i++) {
    let s = offset + i * stride;
    for (let c = 0; c < cols; c++) {
      for (let k = 0; k < colBytes; k++) out[d + k] = src[s + k];
      d += colBytes;
      s += colStride;
    }
  }
}

/** Reads sparse index `j` (little endian, any alignment). */
function readSparseIndex(view: DataView, offset: number, componentType: number, j: number): number {
  if (componentType === UNSIGNED_BYTE) return view.getUint8(offset + j);
  if (componentType === UNSIGNED_SHORT) return view.getUint16(offset + 2 * j, true);
  return view.getUint32(offset + 4 * j, true);
}

/** Applies the sparse substitution of `spec` to the dense element bytes in `out`. */
function applySparse(out: Uint8Array, spec: AccessorSpec, views: ViewTable, l: ElementLayout): void {
  const sp = spec.sparse!;
  const ind = views.bytes[sp.indicesView];
  const indView = new DataView(ind.buffer, ind.byteOffset, ind.byteLength);
  const values = views.bytes[sp.valuesView];
  const dense = l.cols * l.colBytes;
  const packed = l.cols * l.colStride;
  const one = new Uint8Array(dense);
  for (let j = 0; j < sp.count; j++) {
    const target = readSparseIndex(indView, sp.indicesOffset, sp.indicesComponentType, j);
    if (target >= spec.count) badAccessor(spec.index, `sparse index ${target} is out of range (count ${spec.count})`);
    copyElements(one, values, sp.valuesOffset + j * packed, packed, 1, l);
    out.set(one, target * dense);
  }
}

/**
 * Decodes a checked accessor into a dense, tightly packed typed array of its component
 * type (itemSize values per element, matrix padding removed). Data already stored that way
 * (tightly packed, aligned to its component size, no sparse substitution) is returned as a
 * view of the buffer's bytes, not copied: the array is read-only by contract, like every
 * decoded array. Strided, padded and unaligned data are copied, an accessor without
 * bufferView starts as zeros, sparse substitution is applied to a copy. The budget is charged
 * the decoded size either way (so what a file may declare does not depend on its layout);
 * throws 'too-large' or 'bad-accessor'.
 */
export function decodeAccessor(spec: AccessorSpec, views: ViewTable, vertexAttribute: boolean, budget: DecodeBudget): ComponentArray {
  if (!LITTLE_ENDIAN_HOST) throw new TanframeError('unsupported-feature', 'big-endian hosts are not supported');
  const length = spec.count * spec.itemSize;
  const componentBytes = COMPONENT_BYTES[spec.componentType];
  const byteLength = length * componentBytes;
  chargeBudget(budget, byteLength, `accessor ${spec.index}`);
  const l = elementLayout(spec.type, spec.componentType);
  if (spec.bufferView !== null && !spec.sparse) {
    const src = views.bytes[spec.bufferView];
    const start = src.byteOffset + spec.byteOffset;
    const dense = l.cols * l.colBytes;
    if (l.colStride === l.colBytes && strideOf(spec, views, vertexAttribute) === dense && start % componentBytes === 0) {
      return typedArrayOf(spec.componentType, src.buffer as ArrayBuffer, start, length);
    }
  }
  const out = new Uint8Array(byteLength);
  if (spec.bufferView !== null) {
    copyElements(out, views.bytes[spec.bufferView], spec.byteOffset, strideOf(spec, views, vertexAttribute), spec.count, l);
  }
  if (spec.sparse) applySparse(out, spec, views, l);
  return typedArrayOf(spec.componentType, out.buffer, 0, length);
}
