/**
 * Based on: Wavefront OBJ geometry format (v / vt / vn / f statements, 1-based and negative
 * relative indices, mtllib / usemtl), mapped onto the glTF 2.0 specification (section 3.7
 * meshes, 3.9 materials, 3.8 textures); quad splitting follows the standard tangent method's
 * shorter-diagonal rule (MikkTSpace reference code, from memory).
 *
 * Reads an OBJ (+ MTL) file into the Asset model with a synthesized glTF JSON. All vertex
 * data lives in `Asset.primitives`; the JSON primitives carry no accessors until a writer
 * (or `objAttributesAsGltf`) stores them.
 */
import * as nodePath from 'node:path';
import {
  FLOAT,
  MODE_TRIANGLES,
  UNSIGNED_INT,
  UNSIGNED_SHORT,
  type Asset,
  type AttributeData,
  type ExternalImage,
  type PrimitiveData,
} from '../mesh/asset.js';
import { TanframeError } from '../mesh/errors.js';
import { parseMtl, parseObjFloat, type MtlMaterial, type MtlTexture } from './mtlRead.js';
import { readInputBytes } from './files.js';
import { DEFAULT_MAX_TRIANGLES, checkTriangleLimit, type ReadLimits } from './limits.js';
import { diskResources, type ResourceSource } from './resources.js';

/** Growable float64 storage used while parsing (no per-element objects). */
class GrowF64 {
  a = new Float64Array(1024);
  n = 0;
  push(x: number): void {
    if (this.n === this.a.length) {
      const b = new Float64Array(this.a.length * 2);
      b.set(this.a);
      this.a = b;
    }
    this.a[this.n++] = x;
  }
}

/** Growable int32 storage used while parsing. */
class GrowI32 {
  a = new Int32Array(1024);
  n = 0;
  push(x: number): void {
    if (this.n === this.a.length) {
      const b = new Int32Array(this.a.length * 2);
      b.set(this.a);
      this.a = b;
    }
    this.a[this.n++] = x;
  }
}

const INT_RE = /^[+-]?\d+$/;
/** Largest face index magnitude accepted (corner indices are stored as int32). */
const MAX_OBJ_INDEX = 0x7fffffff;
const WS_RE = /\s+/;

/** What the OBJ text holds, flat. Indices are 0-based absolute; -1 = absent. */
interface ObjText {
  positions: GrowF64; // 3 per v
  colors: GrowF64; // 3 per v (1,1,1 when the v line has none)
  anyColor: boolean;
  uvs: GrowF64; // 2 per vt (u, v as written: v upward)
  normals: GrowF64; // 3 per vn
  cornerV: GrowI32;
  cornerT: GrowI32;
  cornerN: GrowI32;
  faceStart: GrowI32; // first corner of each face; a final sentinel is pushed at the end
  faceGroup: GrowI32;
  faceLine: GrowI32;
  groupNames: (string | null)[];
  objectName: string | null;
  mtllibs: { file: string; line: number }[];
  lineElements: number;
  pointElements: number;
}

/** Text quoted in a message, cut to a readable length (a hostile line can be megabytes long). */
function clip(text: string): string {
  return text.length > 40 ? `${text.slice(0, 37)}...` : text;
}

function badObj(line: number, reason: string): TanframeError {
  return new TanframeError('bad-obj', `line ${line}: ${reason}`);
}

/** Parses one face-corner index (1-based, or negative relative to `count`); returns 0-based. */
function parseIndex(tok: string, count: number, what: string, line: number): number {
  if (!INT_RE.test(tok)) throw badObj(line, `malformed ${what} index '${clip(tok)}' in face`);
  const k = Number(tok);
  if (k === 0) throw badObj(line, `${what} index 0 in face (OBJ indices start at 1)`);
  // Corners are stored as int32: a larger index could never name a vertex, and converting it
  // would wrap around to a small, valid-looking one.
  if (k > MAX_OBJ_INDEX || k < -MAX_OBJ_INDEX) throw badObj(line, `${what} index ${clip(tok)} out of range`);
  if (k > 0) return k - 1; // checked against the final counts after the whole file is read
  const abs = count + k;
  if (abs < 0) throw badObj(line, `relative ${what} index ${k} out of range (${count} defined so far)`);
  return abs;
}

function parseNumbers(toks: string[], from: number, out: Float64Array, min: number, max: number): number {
  let n = 0;
  for (let i = from; i < toks.length && n < max; i++) {
    const x = parseObjFloat(toks[i]!);
    if (Number.isNaN(x)) return -1;
    out[n++] = x;
  }
  return n >= min ? n : -1;
}

/** Splits mtllib arguments: several names when every token ends in .mtl, else one name with spaces. */
export function splitMtllib(rest: string): string[] {
  const toks = rest.split(WS_RE).filter((t) => t !== '');
  if (toks.length > 1 && toks.every((t) => t.toLowerCase().endsWith('.mtl'))) return toks;
  return rest === '' ? [] : [rest];
}

/** Whether a character code is white space as String.prototype.trim sees it (the ASCII and common Unicode ones). */
function isSpace(c: number): boolean {
  return c === 32 || (c >= 9 && c <= 13) || c === 0xa0 || c === 0xfeff || c === 0x1680 || (c >= 0x2000 && c <= 0x200a) ||
    c === 0x2028 || c === 0x2029 || c === 0x202f || c === 0x205f || c === 0x3000;
}

/**
 * Index of the backslash that continues the physical line text[start, end) (the last
 * character before trailing white space), or -1 when the line does not continue.
 */
function continuationAt(text: string, start: number, end: number): number {
  let k = end - 1;
  while (k >= start && isSpace(text.charCodeAt(k))) k--;
  return k >= start && text.charCodeAt(k) === 92 ? k : -1;
}

/** Parses OBJ text; refuses with 'too-large' once the faces hold more than `limits` allow. */
function parseObjText(text: string, limits: ReadLimits): ObjText {
  const maxTriangles = limits.maxTriangles ?? DEFAULT_MAX_TRIANGLES;
  let triangles = 0;
  const r: ObjText = {
    positions: new GrowF64(),
    colors: new GrowF64(),
    anyColor: false,
    uvs: new GrowF64(),
    normals: new GrowF64(),
    cornerV: new GrowI32(),
    cornerT: new GrowI32(),
    cornerN: new GrowI32(),
    faceStart: new GrowI32(),
    faceGroup: new GrowI32(),
    faceLine: new GrowI32(),
    groupNames: [],
    objectName: null,
    mtllibs: [],
    lineElements: 0,
    pointElements: 0,
  };
  const groupOf = new Map<string | null, number>();
  let material: string | null = null;
  let currentGroup = -1;
  const nums = new Float64Array(8);
  const len = text.length;
  let pos = 0;
  let lineNo = 0;
  while (pos < len) {
    let end = text.indexOf('\n', pos);
    if (end < 0) end = len;
    lineNo++;
    const startLine = lineNo;
    let line: string;
    // Line continuation: a backslash at the end of a line (before trailing white space) joins
    // the next one, the backslash becoming a space. Each physical line is scanned once; only
    // pieces with text are kept (a run of empty continued lines becomes one run of spaces),
    // and everything is joined once, so a long chain costs its length.
    let cut = continuationAt(text, pos, end);
    if (cut < 0 || end + 1 >= len) {
      line = text.slice(pos, end);
    } else {
      const pieces: string[] = [];
      let spaces = 0;
      while (cut >= 0 && end + 1 < len) {
        if (cut > pos) {
          if (spaces > 0) pieces.push(' '.repeat(spaces));
          pieces.push(text.slice(pos, cut));
          spaces = 0;
        }
        spaces++; // the backslash
        pos = end + 1;
        end = text.indexOf('\n', pos);
        if (end < 0) end = len;
        lineNo++;
        cut = continuationAt(text, pos, end);
      }
      pieces.push(' '.repeat(spaces), text.slice(pos, end));
      line = pieces.join('');
    }
    pos = end + 1;
    const hash = line.indexOf('#');
    if (hash >= 0) line = line.slice(0, hash);
    line = line.trim();
    if (line === '') continue;
    const sp = line.search(WS_RE);
    const key = sp < 0 ? line : line.slice(0, sp);
    const rest = sp < 0 ? '' : line.slice(sp).trim();
    switch (key) {
      case 'v': {
        const toks = rest.split(WS_RE);
        const n = parseNumbers(toks, 0, nums, 3, 7);
        if (n < 0 || toks.length > 7) throw badObj(startLine, `malformed vertex 'v ${clip(rest)}'`);
        r.positions.push(nums[0]!);
        r.positions.push(nums[1]!);
        r.positions.push(nums[2]!);
        if (n >= 6) {
          // `v x y z r g b` (a common extension); 7 numbers read as x y z w r g b is rare,
          // so six or more take the last three as the colour.
          r.colors.push(nums[n - 3]!);
          r.colors.push(nums[n - 2]!);
          r.colors.push(nums[n - 1]!);
          r.anyColor = true;
        } else {
          r.colors.push(1);
          r.colors.push(1);
          r.colors.push(1);
        }
        break;
      }
      case 'vt': {
        const toks = rest.split(WS_RE);
        const n = parseNumbers(toks, 0, nums, 1, 3);
        if (n < 0 || toks.length > 3) throw badObj(startLine, `malformed texture coordinate 'vt ${clip(rest)}'`);
        r.uvs.push(nums[0]!);
        r.uvs.push(n > 1 ? nums[1]! : 0); // Source: OBJ format, vt v defaults to 0
        break;
      }
      case 'vn': {
        const toks = rest.split(WS_RE);
        const n = parseNumbers(toks, 0, nums, 3, 3);
        if (n < 0 || toks.length > 3) throw badObj(startLine, `malformed normal 'vn ${clip(rest)}'`);
        r.normals.push(nums[0]!);
        r.normals.push(nums[1]!);
        r.normals.push(nums[2]!);
        break;
      }
      case 'f':
      case 'fo': {
        const toks = rest === '' ? [] : rest.split(WS_RE);
        if (toks.length < 3) {
          throw badObj(startLine, `face has ${toks.length} corner${toks.length === 1 ? '' : 's'}, at least 3 needed`);
        }
        const nv = r.positions.n / 3;
        const nt = r.uvs.n / 2;
        const nn = r.normals.n / 3;
        r.faceStart.push(r.cornerV.n);
        for (let i = 0; i < toks.length; i++) {
          const parts = toks[i]!.split('/');
          if (parts.length > 3 || parts[0] === '') throw badObj(startLine, `malformed face corner '${clip(toks[i]!)}'`);
          r.cornerV.push(parseIndex(parts[0]!, nv, 'vertex', startLine));
          r.cornerT.push(parts.length > 1 && parts[1] !== '' ? parseIndex(parts[1]!, nt, 'texture', startLine) : -1);
          r.cornerN.push(parts.length > 2 && parts[2] !== '' ? parseIndex(parts[2]!, nn, 'normal', startLine) : -1);
        }
        if (currentGroup < 0) {
          let g = groupOf.get(material);
          if (g === undefined) {
            g = r.groupNames.length;
            r.groupNames.push(material);
            groupOf.set(material, g);
          }
          currentGroup = g;
        }
        r.faceGroup.push(currentGroup);
        r.faceLine.push(startLine);
        triangles += toks.length - 2;
        if (triangles > maxTriangles) checkTriangleLimit(triangles, text.length, limits);
        break;
      }
      case 'usemtl':
        material = rest;
        currentGroup = -1;
        break;
      case 'mtllib':
        for (const f of splitMtllib(rest)) r.mtllibs.push({ file: f, line: startLine });
        break;
      case 'o':
        if (r.objectName === null && rest !== '') r.objectName = rest;
        break;
      case 'l':
        r.lineElements++;
        break;
      case 'p':
        r.pointElements++;
        break;
      default:
        break; // g, s, vp, curves and surfaces: not geometry tanframe bakes
    }
  }
  r.faceStart.push(r.cornerV.n);
  // Positive indices may refer forward; check them against the final counts.
  const nv = r.positions.n / 3;
  const nt = r.uvs.n / 2;
  const nn = r.normals.n / 3;
  const faceCount = r.faceGroup.n;
  for (let f = 0; f < faceCount; f++) {
    const c0 = r.faceStart.a[f]!;
    const c1 = r.faceStart.a[f + 1]!;
    for (let c = c0; c < c1; c++) {
      const v = r.cornerV.a[c]!;
      const t = r.cornerT.a[c]!;
      const n = r.cornerN.a[c]!;
      if (v >= nv) throw badObj(r.faceLine.a[f]!, `vertex index ${v + 1} out of range (${nv} vertices)`);
      if (t >= nt) throw badObj(r.faceLine.a[f]!, `texture index ${t + 1} out of range (${nt} texture coordinates)`);
      if (n >= nn) throw badObj(r.faceLine.a[f]!, `normal index ${n + 1} out of range (${nn} normals)`);
    }
  }
  return r;
}

/** Attribute record of a float accessor. */
function floatAttribute(array: Float32Array, itemSize: number): AttributeData {
  return { array, itemSize, type: `VEC${itemSize}`, componentType: FLOAT, normalized: false };
}

/** Squared distance between items i and j of a float32 array, evaluated in float32 like the reference code. */
function distSqF32(a: Float32Array, size: number, i: number, j: number): number {
  const f = Math.fround;
  let s = 0;
  for (let k = 0; k < size; k++) {
    const d = f(a[j * size + k]! - a[i * size + k]!);
    s = f(s + f(d * d));
  }
  return s;
}

/**
 * Squared texture-space distance between texture coordinates i and j of the file (`vt` items,
 * u and v as written, v upward), each rounded to float32 first and evaluated in float32: the
 * coordinates as the file stores them, before v' = 1 - v (METHODS.md step 7).
 */
function fileUvDistSqF32(uvs: Float64Array, i: number, j: number): number {
  const f = Math.fround;
  const du = f(f(uvs[j * 2]!) - f(uvs[i * 2]!));
  const dv = f(f(uvs[j * 2 + 1]!) - f(uvs[i * 2 + 1]!));
  return f(f(du * du) + f(dv * dv));
}

/**
 * Builds one primitive from the faces of group `g`: de-duplicates corners by their
 * (v, vt, vn) triple (only the parts emitted as attributes count), then triangulates.
 */
function buildPrimitive(
  o: ObjText,
  faceList: Int32Array,
  faceFrom: number,
  faceTo: number,
  primitiveIndex: number,
  meshName: string,
  material: number | null,
  warnings: string[],
): PrimitiveData {
  const cs = o.faceStart.a;
  const cv = o.cornerV.a;
  const ct = o.cornerT.a;
  const cn = o.cornerN.a;
  let corners = 0;
  let missingT = 0;
  let missingN = 0;
  let triangles = 0;
  for (let i = faceFrom; i < faceTo; i++) {
    const f = faceList[i]!;
    const k = cs[f + 1]! - cs[f]!;
    corners += k;
    triangles += k - 2;
    for (let c = cs[f]!; c < cs[f + 1]!; c++) {
      if (ct[c]! < 0) missingT++;
      if (cn[c]! < 0) missingN++;
    }
  }
  const useT = missingT === 0;
  const useN = missingN === 0;
  const label = `primitive ${primitiveIndex}`;
  if (!useT && missingT < corners) {
    warnings.push(`${label}: ${missingT} of ${corners} face corners lack texture coordinates; TEXCOORD_0 omitted`);
  }
  if (!useN && missingN < corners) {
    warnings.push(`${label}: ${missingN} of ${corners} face corners lack normals; NORMAL omitted`);
  }

  // De-duplication: output vertex e copies (srcV[e], srcT[e], srcN[e]); an open-addressing
  // hash on the triple finds an earlier equal corner in constant expected time, however many
  // texture coordinates or normals meet at one position.
  const srcV = new GrowI32();
  const srcT = new GrowI32();
  const srcN = new GrowI32();
  let size = 16;
  while (size < corners * 2) size *= 2;
  const mask = size - 1;
  const table = new Int32Array(size).fill(-1);
  const cornerOut = new Int32Array(corners);
  let cc = 0;
  for (let i = faceFrom; i < faceTo; i++) {
    const f = faceList[i]!;
    for (let c = cs[f]!; c < cs[f + 1]!; c++) {
      const v = cv[c]!;
      const t = useT ? ct[c]! : -1;
      const n = useN ? cn[c]! : -1;
      let h = Math.imul(v, 0x9e3779b1) ^ Math.imul(t + 1, 0x85ebca6b) ^ Math.imul(n + 1, 0xc2b2ae35);
      h ^= h >>> 15;
      h = Math.imul(h, 0x2c1b3c6d);
      h ^= h >>> 13;
      let slot = h & mask;
      let e = table[slot]!;
      while (e >= 0 && (srcV.a[e] !== v || srcT.a[e] !== t || srcN.a[e] !== n)) {
        slot = (slot + 1) & mask;
        e = table[slot]!;
      }
      if (e < 0) {
        e = srcV.n;
        srcV.push(v);
        srcT.push(t);
        srcN.push(n);
        table[slot] = e;
      }
      cornerOut[cc++] = e;
    }
  }
  const vertexCount = srcV.n;

  const pIn = o.positions.a;
  const positions = new Float32Array(vertexCount * 3);
  for (let e = 0; e < vertexCount; e++) {
    const v = srcV.a[e]!;
    positions[e * 3] = pIn[v * 3]!;
    positions[e * 3 + 1] = pIn[v * 3 + 1]!;
    positions[e * 3 + 2] = pIn[v * 3 + 2]!;
  }
  const attributes: Record<string, AttributeData> = { POSITION: floatAttribute(positions, 3) };
  if (useN) {
    const nIn = o.normals.a;
    const normals = new Float32Array(vertexCount * 3);
    for (let e = 0; e < vertexCount; e++) {
      const n = srcN.a[e]!;
      normals[e * 3] = nIn[n * 3]!;
      normals[e * 3 + 1] = nIn[n * 3 + 1]!;
      normals[e * 3 + 2] = nIn[n * 3 + 2]!;
    }
    attributes.NORMAL = floatAttribute(normals, 3);
  }
  let uvs: Float32Array | null = null;
  if (useT) {
    const tIn = o.uvs.a;
    uvs = new Float32Array(vertexCount * 2);
    for (let e = 0; e < vertexCount; e++) {
      const t = srcT.a[e]!;
      uvs[e * 2] = tIn[t * 2]!;
      // Source: glTF 2.0 spec 3.7.2.1 (UV origin top-left) vs OBJ (v upward): v' = 1 - v.
      uvs[e * 2 + 1] = 1 - tIn[t * 2 + 1]!;
    }
    attributes.TEXCOORD_0 = floatAttribute(uvs, 2);
  }
  if (o.anyColor) {
    const cIn = o.colors.a;
    const colors = new Float32Array(vertexCount * 3);
    for (let e = 0; e < vertexCount; e++) {
      const v = srcV.a[e]!;
      colors[e * 3] = cIn[v * 3]!;
      colors[e * 3 + 1] = cIn[v * 3 + 1]!;
      colors[e * 3 + 2] = cIn[v * 3 + 2]!;
    }
    attributes.COLOR_0 = floatAttribute(colors, 3);
  }

  // Triangulation. Quads split along the shorter diagonal: texture-space lengths first,
  // measured on the file's own coordinates (float32, v as written, before v' = 1 - v: rounding
  // 1 - v can reverse a near tie), then position-space lengths on a tie, 0-2 on a full tie
  // (METHODS.md step 7; MikkTSpace reference code, from memory). Polygons with more corners are
  // fanned from corner 0; their triangles share the face id, and the solve takes them as
  // independent triangles (only two triangles with one id form a quad).
  const indices = new Uint32Array(triangles * 3);
  const faces = new Uint32Array(triangles);
  // The line of each triangle's `f` statement (the first physical line of a continued one).
  const faceLines = new Uint32Array(triangles);
  const fl = o.faceLine.a;
  let ti = 0;
  cc = 0;
  for (let i = faceFrom; i < faceTo; i++) {
    const f = faceList[i]!;
    const k = cs[f + 1]! - cs[f]!;
    const faceId = i - faceFrom;
    const a = cornerOut[cc]!;
    if (k === 4) {
      const b = cornerOut[cc + 1]!;
      const c = cornerOut[cc + 2]!;
      const d = cornerOut[cc + 3]!;
      let diag02: boolean;
      const t02 = uvs ? fileUvDistSqF32(o.uvs.a, srcT.a[a]!, srcT.a[c]!) : 0;
      const t13 = uvs ? fileUvDistSqF32(o.uvs.a, srcT.a[b]!, srcT.a[d]!) : 0;
      if (t02 < t13) diag02 = true;
      else if (t13 < t02) diag02 = false;
      else diag02 = !(distSqF32(positions, 3, b, d) < distSqF32(positions, 3, a, c));
      if (diag02) {
        indices[ti * 3] = a; indices[ti * 3 + 1] = b; indices[ti * 3 + 2] = c;
        faces[ti++] = faceId;
        indices[ti * 3] = a; indices[ti * 3 + 1] = c; indices[ti * 3 + 2] = d;
        faces[ti++] = faceId;
      } else {
        indices[ti * 3] = a; indices[ti * 3 + 1] = b; indices[ti * 3 + 2] = d;
        faces[ti++] = faceId;
        indices[ti * 3] = b; indices[ti * 3 + 1] = c; indices[ti * 3 + 2] = d;
        faces[ti++] = faceId;
      }
    } else {
      for (let j = 1; j + 1 < k; j++) {
        indices[ti * 3] = a;
        indices[ti * 3 + 1] = cornerOut[cc + j]!;
        indices[ti * 3 + 2] = cornerOut[cc + j + 1]!;
        faces[ti++] = faceId;
      }
    }
    for (let t = ti - (k - 2); t < ti; t++) faceLines[t] = fl[f]!;
    cc += k;
  }
  return {
    mesh: 0,
    primitive: primitiveIndex,
    meshName,
    material,
    mode: MODE_TRIANGLES,
    attributes,
    indices,
    targets: [],
    faces,
    faceLines,
  };
}

/** glTF image mimeType for a file name, or null when glTF core cannot carry the format. */
function mimeTypeOf(file: string): string | null {
  const ext = nodePath.extname(file.split(/[?#]/)[0]!).toLowerCase();
  if (ext === '.png') return 'image/png';
  if (ext === '.jpg' || ext === '.jpeg') return 'image/jpeg';
  return null;
}

const SCHEME_RE = /^[A-Za-z][A-Za-z0-9+.-]*:/;

/**
 * Turns a file name written in an .mtl / mtllib statement into a glTF-style URI relative to
 * the OBJ's folder: backslashes become slashes, each segment is percent-encoded, and names in
 * an .mtl from a sub-folder are prefixed with that folder. Absolute paths and schemes are
 * passed through untouched so that URI resolution refuses them.
 */
export function fileNameToUri(file: string, relativeTo: string): string {
  const slashed = file.replace(/\\/g, '/');
  if (slashed.startsWith('/') || SCHEME_RE.test(slashed)) return file;
  const encoded = slashed
    .split('/')
    .map((s) => encodeURIComponent(s))
    .join('/');
  if (relativeTo === '' || relativeTo === '.') return encoded;
  return nodePath.posix.normalize(nodePath.posix.join(relativeTo, encoded));
}

function errnoReason(e: unknown): string {
  const code = (e as { code?: string } | null)?.code;
  if (code === 'ENOENT') return 'not found';
  if (code === 'EISDIR') return 'is a folder';
  if (code === 'EACCES' || code === 'EPERM') return 'permission denied';
  if (code === 'ENOTREG') return 'not a regular file';
  return code ?? (e instanceof Error ? e.message.split('\n')[0]! : 'unreadable');
}

/**
 * Reads an OBJ file (and the MTL libraries it names) into an Asset with container 'obj'.
 *
 * The synthesized glTF JSON has one scene, one node and one mesh (named after the first `o`
 * statement, else the file name without extension) with one triangle primitive per `usemtl`
 * material in order of first use; faces before any `usemtl` form a primitive without
 * material. JSON primitives have empty `attributes` (all data is in `Asset.primitives`).
 * Materials: `Kd` -> baseColorFactor (clamped to [0,1]), `map_Kd` -> baseColorTexture,
 * `norm` / `map_Bump` / `bump` -> normalTexture (`-bm` -> scale); metallicFactor 0 (OBJ
 * materials are dielectric; common practice). Textures use the default sampler.
 *
 * Per primitive: POSITION; NORMAL when every corner has a `vn`; TEXCOORD_0 when every corner
 * has a `vt`, stored as (u, 1 - v) in glTF's convention; COLOR_0 when any `v` line carries a
 * colour (white elsewhere). Corners sharing (v, vt, vn) share one vertex, in order of first
 * appearance. Quads split along the shorter diagonal (texture space, on the coordinates as
 * written, then position space); larger polygons as fans from corner 0. `faces` holds each
 * triangle's face number within the primitive.
 *
 * Warnings (never failures): missing .mtl or image files (image bytes null, URI kept), lines
 * and points ignored, undefined materials, partially present vt / vn.
 * Throws TanframeError: 'read-failed' / 'empty-file' for the file itself, 'bad-obj' (with the
 * line number) for malformed statements, index 0, out-of-range indices, faces with fewer than
 * three corners or no faces at all; 'bad-uri' when an .mtl or image name escapes the folder;
 * 'too-large' when the faces hold more triangles than `limits` allow (checked while parsing).
 */
export async function readObj(path: string, limits: ReadLimits = {}): Promise<Asset> {
  return readObjBytes(await readInputBytes(path), path, limits);
}

/**
 * Reads OBJ bytes into an Asset, as readObj does for a file: `path` names the file (its folder
 * and name), material libraries and images come from `resources` (default: the files beside
 * `path`).
 */
export async function readObjBytes(bytes: Uint8Array, path: string, limits: ReadLimits = {}, resources: ResourceSource = diskResources): Promise<Asset> {
  if (bytes.length === 0) throw new TanframeError('empty-file', 'the file is empty (0 bytes)');
  const text = new TextDecoder('utf-8').decode(bytes); // drops a leading BOM
  const o = parseObjText(text, limits);
  const faceCount = o.faceGroup.n;
  if (faceCount === 0) throw new TanframeError('bad-obj', 'no faces');

  const warnings: string[] = [];
  const baseDir = nodePath.dirname(nodePath.resolve(path));
  const meshName = o.objectName ?? nodePath.basename(path, nodePath.extname(path));

  // Material libraries.
  const library = new Map<string, MtlMaterial>();
  const mtlDirOf = new Map<MtlMaterial, string>();
  let mtlMissing = false;
  const materialLibraries: string[] = [];
  for (const lib of o.mtllibs) {
    const uri = fileNameToUri(lib.file, '');
    const res = resources.resolve(uri, baseDir);
    if (res.kind === 'file') materialLibraries.push(res.path);
    let mtlText: string;
    if (res.kind === 'data') {
      mtlText = new TextDecoder('utf-8').decode(res.bytes);
    } else {
      try {
        mtlText = new TextDecoder('utf-8').decode(await resources.readFile(res.path));
      } catch (e) {
        warnings.push(`material library '${lib.file}' (line ${lib.line}): ${errnoReason(e)}`);
        mtlMissing = true;
        continue;
      }
    }
    const parsed = parseMtl(mtlText, lib.file);
    for (const w of parsed.warnings) warnings.push(w);
    const dir = res.kind === 'data' ? '' : nodePath.posix.dirname(uri);
    for (const [name, m] of parsed.materials) {
      library.set(name, m);
      mtlDirOf.set(m, dir);
    }
  }

  // Materials, textures and images, in order of first use.
  const json: any = {
    asset: { version: '2.0' },
    scene: 0,
    scenes: [{ nodes: [0] }],
    nodes: [{ name: meshName, mesh: 0 }],
    meshes: [{ name: meshName, primitives: [] as any[] }],
  };
  const materials: any[] = [];
  const textures: any[] = [];
  const images: any[] = [];
  const externalImages: ExternalImage[] = [];
  const textureOfUri = new Map<string, number>();

  const textureFor = async (tex: MtlTexture, mtlDir: string, materialName: string): Promise<number> => {
    const uri = fileNameToUri(tex.file, mtlDir);
    const known = textureOfUri.get(uri);
    if (known !== undefined) return known;
    const res = resources.resolve(uri, baseDir);
    const imageIndex = images.length;
    const image: any = { uri };
    if (res.kind === 'data') {
      if (res.mimeType) image.mimeType = res.mimeType;
    } else {
      const mime = mimeTypeOf(tex.file);
      if (mime) image.mimeType = mime;
      else warnings.push(`image '${tex.file}' (material '${materialName}'): format not supported by glTF core (PNG or JPEG expected)`);
      let data: Uint8Array | null = null;
      try {
        data = new Uint8Array(await resources.readFile(res.path));
      } catch (e) {
        warnings.push(`image '${tex.file}' (material '${materialName}'): ${errnoReason(e)}`);
      }
      externalImages.push({ image: imageIndex, uri, path: res.path, bytes: data });
    }
    images.push(image);
    const textureIndex = textures.length;
    textures.push({ source: imageIndex });
    textureOfUri.set(uri, textureIndex);
    return textureIndex;
  };

  const materialIndexOfGroup: (number | null)[] = [];
  for (const name of o.groupNames) {
    if (name === null) {
      materialIndexOfGroup.push(null);
      continue;
    }
    const mat: any = { name, pbrMetallicRoughness: { metallicFactor: 0 } };
    const def = library.get(name);
    if (!def) {
      if (!mtlMissing) {
        warnings.push(`material '${name}' is not defined in ${o.mtllibs.length > 0 ? 'the material library' : 'any material library (no mtllib)'}`);
      }
    } else {
      const dir = mtlDirOf.get(def) ?? '';
      if (def.kd) {
        const c = (x: number): number => Math.min(1, Math.max(0, x));
        mat.pbrMetallicRoughness.baseColorFactor = [c(def.kd[0]), c(def.kd[1]), c(def.kd[2]), 1];
      }
      if (def.mapKd) {
        mat.pbrMetallicRoughness.baseColorTexture = { index: await textureFor(def.mapKd, dir, name) };
      }
      if (def.normal) {
        const nt: any = { index: await textureFor(def.normal, dir, name) };
        if (def.normal.bumpMultiplier !== null) nt.scale = def.normal.bumpMultiplier;
        mat.normalTexture = nt;
      }
    }
    materialIndexOfGroup.push(materials.length);
    materials.push(mat);
  }
  if (materials.length > 0) json.materials = materials;
  if (textures.length > 0) json.textures = textures;
  if (images.length > 0) json.images = images;

  // Faces by group (counting sort keeps file order inside each group).
  const groupCount = o.groupNames.length;
  const groupStart = new Int32Array(groupCount + 1);
  for (let f = 0; f < faceCount; f++) groupStart[o.faceGroup.a[f]! + 1]!++;
  for (let g = 0; g < groupCount; g++) groupStart[g + 1]! += groupStart[g]!;
  const fill = groupStart.slice(0, groupCount);
  const faceList = new Int32Array(faceCount);
  for (let f = 0; f < faceCount; f++) faceList[fill[o.faceGroup.a[f]!]!++] = f;

  const primitives: PrimitiveData[] = [];
  for (let g = 0; g < groupCount; g++) {
    const material = materialIndexOfGroup[g]!;
    const p = buildPrimitive(o, faceList, groupStart[g]!, groupStart[g + 1]!, g, meshName, material, warnings);
    primitives.push(p);
    const jp: any = { attributes: {}, mode: MODE_TRIANGLES };
    if (material !== null) jp.material = material;
    json.meshes[0].primitives.push(jp);
  }
  if (o.lineElements > 0 || o.pointElements > 0) {
    warnings.push(`ignored ${o.lineElements} line element(s) and ${o.pointElements} point element(s)`);
  }
  return {
    sourcePath: path,
    container: 'obj',
    json,
    buffers: [],
    externalImages,
    materialLibraries,
    primitives,
    warnings,
  };
}

/**
 * Stores the decoded attributes and indices of an OBJ asset as real glTF accessors: returns a
 * copy of `asset.json` whose primitives reference new accessors and bufferViews in one buffer
 * (`buffers[0]` with byteLength only; the caller sets a uri or writes it as the GLB BIN chunk),
 * and that buffer's bytes. Attributes in PrimitiveData order (POSITION with min/max), then the
 * indices (UNSIGNED_SHORT when every index fits below 65535, else UNSIGNED_INT); each view
 * 4-byte aligned with its target. Deterministic. Precondition: `asset.json` has no buffers.
 */
export function objAttributesAsGltf(asset: Asset): { json: any; buffer: Uint8Array } {
  const json = structuredClone(asset.json);
  const chunks: Uint8Array[] = [];
  let byteLength = 0;
  const bufferViews: any[] = [];
  const accessors: any[] = [];
  const addView = (bytes: Uint8Array, target: number): number => {
    const pad = (4 - (byteLength % 4)) % 4;
    if (pad) {
      chunks.push(new Uint8Array(pad));
      byteLength += pad;
    }
    bufferViews.push({ buffer: 0, byteOffset: byteLength, byteLength: bytes.byteLength, target });
    chunks.push(bytes);
    byteLength += bytes.byteLength;
    return bufferViews.length - 1;
  };
  for (const p of asset.primitives) {
    const jp = json.meshes[p.mesh].primitives[p.primitive];
    jp.attributes = {};
    for (const [semantic, a] of Object.entries(p.attributes)) {
      const arr = a.array;
      const view = addView(new Uint8Array(arr.buffer, arr.byteOffset, arr.byteLength).slice(), 34962);
      const count = arr.length / a.itemSize;
      const acc: any = { bufferView: view, componentType: a.componentType, count, type: a.type };
      if (a.normalized) acc.normalized = true;
      if (semantic === 'POSITION') {
        const min = [Infinity, Infinity, Infinity];
        const max = [-Infinity, -Infinity, -Infinity];
        for (let i = 0; i < count; i++) {
          for (let k = 0; k < 3; k++) {
            const x = arr[i * 3 + k]!;
            if (x < min[k]!) min[k] = x;
            if (x > max[k]!) max[k] = x;
          }
        }
        acc.min = min;
        acc.max = max;
      }
      jp.attributes[semantic] = accessors.length;
      accessors.push(acc);
    }
    if (p.indices) {
      const vertexCount = p.attributes.POSITION!.array.length / 3;
      const small = vertexCount <= 65535;
      const idx = small ? Uint16Array.from(p.indices) : p.indices.slice();
      const view = addView(new Uint8Array(idx.buffer, idx.byteOffset, idx.byteLength), 34963);
      jp.indices = accessors.length;
      accessors.push({
        bufferView: view,
        componentType: small ? UNSIGNED_SHORT : UNSIGNED_INT,
        count: idx.length,
        type: 'SCALAR',
      });
    }
  }
  const pad = (4 - (byteLength % 4)) % 4;
  if (pad) {
    chunks.push(new Uint8Array(pad));
    byteLength += pad;
  }
  const buffer = new Uint8Array(byteLength);
  let off = 0;
  for (const c of chunks) {
    buffer.set(c, off);
    off += c.byteLength;
  }
  json.buffers = [{ byteLength }];
  json.bufferViews = bufferViews;
  json.accessors = accessors;
  return { json, buffer };
}
