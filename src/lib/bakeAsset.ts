/**
 * The solve step over a whole asset: for each mesh primitive, decide whether it takes part,
 * expand strips and fans, generate missing normals, compute frames (in the normal texture's
 * transformed UV space when its KHR_texture_transform rotates or mirrors the map), split
 * vertices and build the replacement geometry the writer stores: TANGENT in the requested
 * component type, morph targets split like the base and given TANGENT deltas where they carry
 * NORMAL deltas. Primitives that share their accessors (and UV set, transform and options)
 * are solved once and share one replacement. Pure: no file system, no console.
 */
import type { Asset, AttributeData, PrimitiveData, PrimitiveReplacement } from '../mesh/asset.js';
import { FLOAT, MODE_TRIANGLES } from '../mesh/asset.js';
import { composeSource, gatherAttribute, toFloat32 } from '../mesh/decode.js';
import { compactPrimitive, createCompactScratch, type CompactScratch } from '../mesh/compact.js';
import { generateNormals } from '../mesh/normals.js';
import { expandToTriangleList, isTriangleMode } from '../mesh/triangulate.js';
import { computeFrames } from '../frames/computeFrames.js';
import { countMirrorSeamSplits, markMirroredTriangles } from '../diagnose/index.js';
import {
  FINDING_BAD_NORMALS, FINDING_DEGENERATE_GEOMETRY, FINDING_DEGENERATE_UV, FINDING_INVALID_VALUES, FINDING_TANGENT_MISMATCH, FINDING_UV_OVERLAP,
} from '../diagnose/finding.js';
import type { PrimitiveReport } from '../report/types.js';
import type { UvPicture } from '../report/uvPicture.js';
import { diagnosePrimitive } from './diagnosePrimitive.js';
import { buildUvPicture, hasFindings } from './pictures.js';
import { tangentNeedOf } from './material.js';
import { morphTangentDelta, type MorphBase } from './morphTangents.js';
import type { ProcessOptions } from './options.js';
import { encodeTangents, tangentTypeFor } from './tangentEncoding.js';
import { Arena, threadArena } from '../mesh/arena.js';
import { applyUvTransform, changesFrames, type UvTransform } from '../mesh/uvTransform.js';
import { componentHalfStep, tangentValidityTolerances, unitLengthTolerance, uvOverlapAbsolute } from '../mesh/tolerances.js';

/** Result of solving every primitive of an asset. */
export interface AssetSolve {
  primitives: PrimitiveReport[];
  /** Keyed by index into asset.primitives; only primitives whose geometry changes. */
  replacements: Map<number, PrimitiveReplacement>;
  /** UV picture data of the primitives with findings, when asked for (else empty). */
  pictures: UvPicture[];
}

function emptyReport(p: PrimitiveData, options: ProcessOptions): PrimitiveReport {
  return {
    mesh: p.mesh,
    meshName: p.meshName,
    primitive: p.primitive,
    material: p.material,
    uvSet: null,
    normalMapped: false,
    method: options.method,
    action: 'skipped',
    skipReason: null,
    triangles: 0,
    verticesIn: p.attributes.POSITION ? p.attributes.POSITION.array.length / 3 : 0,
    verticesOut: 0,
    splitVertices: 0,
    mirrorSeamSplits: 0,
    degenerateUv: { count: 0, triangles: [] },
    degenerateGeometry: { count: 0, triangles: [] },
    invalidValues: { count: 0 },
    badNormals: { count: 0 },
    mirroredTriangles: 0,
    uvOverlap: { count: 0, triangles: [] },
    stackedShells: { count: 0, triangles: [] },
    storedTangents: null,
    normalsGenerated: null,
    fallbackTangents: 0,
  };
}

function normalizedCopy(src: Float32Array): Float32Array {
  const out = new Float32Array(src.length);
  for (let i = 0; i < src.length; i += 3) {
    const x = src[i], y = src[i + 1], z = src[i + 2];
    const l = Math.sqrt(x * x + y * y + z * z);
    if (l > 0 && Number.isFinite(l)) { out[i] = x / l; out[i + 1] = y / l; out[i + 2] = z / l; }
  }
  return out;
}

function floatAttribute(array: Float32Array, itemSize: number): AttributeData {
  return { array, itemSize, type: itemSize === 1 ? 'SCALAR' : `VEC${itemSize}`, componentType: FLOAT, normalized: false };
}

/**
 * The texture transform the frame solve applies: the normal texture's KHR_texture_transform
 * when it rotates or mirrors the map and the solve uses that texture's own UV set (a transform
 * made for one set says nothing about another). Offsets and positive scales leave frames as they are.
 */
function solveTransform(need: { texCoord: number; transform: UvTransform | null }, uvSet: number): UvTransform | null {
  return uvSet === need.texCoord && changesFrames(need.transform) ? need.transform : null;
}

/** `uvs` in the transformed space (a new array), or `uvs` itself without a transform. */
function transformedUvs(uvs: Float32Array, t: UvTransform | null): Float32Array {
  if (!t) return uvs;
  const out = new Float32Array(uvs.length);
  applyUvTransform(out, uvs, uvs.length / 2, t);
  return out;
}

/** A target attribute as floats at the solve's input vertices (null when absent). */
function targetFloats(a: AttributeData | undefined, k: number, genSource: Uint32Array | null): Float32Array | null {
  if (!a) return null;
  const f = toFloat32(a);
  return genSource ? gatherFloats(f, k, genSource) : f;
}

/** What a picture of the model needs beyond the replacement geometry (solvePrimitive with `surface`). */
export interface SolvedSurface {
  /** The file's stored TANGENT at each output vertex of the replacement (4 floats), or null when it has none (or normals were generated). */
  storedTangents: Float32Array | null;
  /** Per triangle of the replacement's indices (the input's triangle order), the FINDING_* bits (src/diagnose/finding.ts) of its findings. */
  findings: Uint8Array;
}

/**
 * Solves one primitive. Returns its report, when its geometry changes the replacement, and
 * with `pictures` true and findings to show (hasFindings) its UV picture data (else null).
 * An indexed primitive is first compacted to the vertices its indices reference (original
 * order kept), so its cost and its output follow what it uses, not the size of a vertex
 * buffer it shares; `scratch` (reused across an asset's primitives) makes that linear.
 * Degenerate geometry never throws: it is counted in the report. With `surface` true a
 * baked primitive also returns its SolvedSurface (stored tangents at the output vertices and
 * per-triangle finding bits), for pictures of the model; else `surface` is null.
 */
export function solvePrimitive(
  asset: Asset,
  input: PrimitiveData,
  options: ProcessOptions,
  pictures = false,
  scratch: CompactScratch = createCompactScratch(),
  surface = false,
): { report: PrimitiveReport; replacement: PrimitiveReplacement | null; picture: UvPicture | null; surface: SolvedSurface | null } {
  let p = input;
  const report = emptyReport(p, options);
  const skip = (reason: string) => {
    report.skipReason = reason;
    report.verticesOut = report.verticesIn;
    return { report, replacement: null, picture: null, surface: null };
  };
  const pos = p.attributes.POSITION;
  if (!pos) return skip('no-position');
  if (!isTriangleMode(p.mode)) return skip('not-triangles');
  const need = tangentNeedOf(asset.json, p.material);
  const uvSet = options.uv ?? need.texCoord;
  report.uvSet = uvSet;
  report.normalMapped = need.needsTangents;
  if (!need.needsTangents && !options.allPrimitives && asset.container !== 'obj') return skip('no-normal-texture');
  const uvAttr = p.attributes[`TEXCOORD_${uvSet}`];
  if (!uvAttr) return skip('no-texcoord');
  p = compactPrimitive(scratch, p);
  const vertexCount = p.attributes.POSITION.array.length / 3;
  report.verticesIn = vertexCount;
  // A stored triangle list is used as it is (read-only, like every decoded array), not copied.
  const tri = p.mode === MODE_TRIANGLES && p.indices ? p.indices.subarray(0, p.indices.length - (p.indices.length % 3)) : expandToTriangleList(p.mode, p.indices, vertexCount);
  const triangleCount = tri.length / 3;
  report.triangles = triangleCount;
  if (triangleCount === 0) return skip('empty');

  const transform = solveTransform(need, uvSet);
  // The primitive's decoded input, once (diagnostics read these too).
  const inputPositions = toFloat32(p.attributes.POSITION);
  const inputUvs = toFloat32(p.attributes[`TEXCOORD_${uvSet}`]);
  const normalAttr = p.attributes.NORMAL;
  const inputNormals = normalAttr ? toFloat32(normalAttr) : null;
  let positions = inputPositions;
  let uvs = inputUvs;
  let normals: Float32Array;
  let indices = tri;
  let genSource: Uint32Array | null = null;
  if (!inputNormals || options.normals !== 'keep') {
    const mode = options.normals === 'smooth' ? 'smooth' : 'flat';
    const g = generateNormals(tri, positions, triangleCount, vertexCount, mode, options.smoothAngle);
    genSource = g.sourceVertex;
    positions = gatherFloats(positions, 3, genSource);
    uvs = gatherFloats(uvs, 2, genSource);
    normals = g.normals;
    indices = g.indices;
    report.normalsGenerated = mode;
  } else {
    normals = normalizedCopy(inputNormals);
  }

  const frames = computeFrames(
    { positions, normals, uvs: transformedUvs(uvs, transform), indices, faces: p.faces },
    { method: options.method, weight: options.weight, uvOrigin: 'top-left' },
  );
  // A huge primitive's solve scratch is let go before the diagnostics make theirs (an ordinary
  // one's stays in the arena for the diagnostics and the next primitive).
  threadArena().trim(Arena.KEEP_BYTES);
  const source = genSource ? composeSource(genSource, frames.sourceVertex) : frames.sourceVertex;
  report.verticesOut = source.length;
  report.splitVertices = genSource ? frames.stats.splitVertices : source.length - vertexCount;
  report.mirrorSeamSplits = countMirrorSeamSplits(frames.sourceVertex, frames.tangents, positions.length / 3);
  report.mirroredTriangles = frames.stats.mirroredTriangles;
  report.fallbackTangents = frames.stats.fallbackTangents;

  const stored = p.attributes.TANGENT && report.normalsGenerated === null ? toFloat32(p.attributes.TANGENT) : null;
  const marks = pictures || surface ? { degenerateUv: new Uint8Array(triangleCount), overlap: new Uint8Array(triangleCount) } : null;
  const more = surface ? {
    degenerateGeometry: new Uint8Array(triangleCount), invalidValues: new Uint8Array(triangleCount),
    badNormals: new Uint8Array(triangleCount), tangentMismatch: new Uint8Array(triangleCount),
  } : null;
  const verdict = diagnosePrimitive(report, {
    indices: tri,
    positions: inputPositions,
    normals: inputNormals,
    uvs: inputUvs,
    storedTangents: stored,
    vertexCount,
    triangleCount,
    computedTangents: frames.tangents,
    computedIndices: frames.indices,
    computedUndefined: frames.undefinedCorners,
    sourceVertex: source,
    uvEpsilon: options.uvEpsilon,
    toleranceDeg: options.tolerance,
    // Unit length and orthogonality are judged for the accessors' encodings (KHR_mesh_quantization).
    normalUnitTolerance: normalAttr ? unitLengthTolerance(normalAttr.componentType, normalAttr.normalized) : undefined,
    tangentValidity: p.attributes.TANGENT ? tangentValidityTolerances(p.attributes.TANGENT, normalAttr ?? null) : undefined,
    positionHalfStep: componentHalfStep(pos.componentType, pos.normalized),
    uvTouching: uvOverlapAbsolute(uvAttr.componentType, uvAttr.normalized),
    marks: marks && more ? { ...marks, ...more } : marks,
    faceLines: p.faceLines ?? null,
    vertexNumbers: p.compactedFrom ?? null,
  });
  threadArena().trim(Arena.KEEP_BYTES);
  let solved: SolvedSurface | null = null;
  if (marks && more) {
    const findings = new Uint8Array(triangleCount);
    for (let t = 0; t < triangleCount; t++) {
      findings[t] = (marks.degenerateUv[t] ? FINDING_DEGENERATE_UV : 0) | (more.degenerateGeometry[t] ? FINDING_DEGENERATE_GEOMETRY : 0) |
        (more.invalidValues[t] ? FINDING_INVALID_VALUES : 0) | (more.badNormals[t] ? FINDING_BAD_NORMALS : 0) |
        (marks.overlap[t] ? FINDING_UV_OVERLAP : 0) | (more.tangentMismatch[t] ? FINDING_TANGENT_MISMATCH : 0);
    }
    solved = { storedTangents: stored ? gatherFloats(stored, 4, source) : null, findings };
  }
  let picture: UvPicture | null = null;
  if (pictures && marks && hasFindings(report)) {
    // Mirroring as src/frames counts it (glTF v downward, so vSign = -1; the default epsilon).
    const mirrored = new Uint8Array(triangleCount);
    markMirroredTriangles(mirrored, tri, inputUvs, triangleCount, -1);
    picture = buildUvPicture(
      { mesh: p.mesh, meshName: p.meshName, primitive: p.primitive, uvSet },
      tri, inputUvs, triangleCount, marks.degenerateUv, mirrored, marks.overlap,
    );
  }

  if (options.keepExisting && stored && verdict.storedTangentsValid) {
    report.action = 'kept';
    report.verticesOut = vertexCount;
    report.splitVertices = 0;
    report.mirrorSeamSplits = 0;
    return { report, replacement: null, picture, surface: null };
  }

  const attributes: Record<string, AttributeData> = {};
  for (const name of Object.keys(p.attributes).sort()) {
    if (name === 'TANGENT') continue;
    if (name === 'NORMAL' && report.normalsGenerated) continue;
    attributes[name] = gatherAttribute(p.attributes[name], source);
  }
  if (report.normalsGenerated) attributes.NORMAL = floatAttribute(gatherFloats(normals, 3, frames.sourceVertex), 3);
  const normalOut = report.normalsGenerated ? undefined : normalAttr;
  const tangent = encodeTangents(frames.tangents, tangentTypeFor(normalOut, options.tangentType, options.tangentTypeFromInput !== false, options.compression ?? 'keep'));
  attributes.TANGENT = tangent;
  // Morph targets: split like the base; TANGENT deltas from the morphed shapes where the target
  // moves normals; a target without NORMAL deltas gets none (a TANGENT delta it had described
  // the difference from tangents this bake replaced, so it is dropped).
  const base: MorphBase = {
    positions, normals, uvs, indices, faces: p.faces,
    outIndices: frames.indices, outTangents: toFloat32(tangent), outCount: source.length,
  };
  // Targets that name the same accessors (the same decoded arrays) are gathered and solved
  // once and share their output arrays, so the writer shares their accessors too.
  const gathered = new Map<AttributeData, AttributeData>();
  const ids = new Map<AttributeData, number>();
  const idOf = (a: AttributeData | undefined) => {
    if (!a) return -1;
    let id = ids.get(a);
    if (id === undefined) ids.set(a, (id = ids.size));
    return id;
  };
  const deltas = new Map<string, AttributeData | null>();
  const targets = p.targets.map((target) => {
    const out: Record<string, AttributeData> = {};
    for (const name of Object.keys(target).sort()) {
      if (name === 'TANGENT') continue;
      let g = gathered.get(target[name]);
      if (!g) gathered.set(target[name], (g = gatherAttribute(target[name], source)));
      out[name] = g;
    }
    const uvTarget = target[`TEXCOORD_${uvSet}`];
    const key = `${idOf(target.POSITION)},${idOf(target.NORMAL)},${idOf(uvTarget)}`;
    let delta = deltas.get(key);
    if (delta === undefined) {
      const d = morphTangentDelta(base, {
        positions: targetFloats(target.POSITION, 3, genSource),
        normals: targetFloats(target.NORMAL, 3, genSource),
        uvs: targetFloats(uvTarget, 2, genSource),
      }, { method: options.method, weight: options.weight, transform });
      delta = d ? floatAttribute(d, 3) : null;
      deltas.set(key, delta);
    }
    if (delta) out.TANGENT = delta;
    return out;
  });
  report.action = 'baked';
  return { report, replacement: { attributes, indices: frames.indices, targets }, picture, surface: solved };
}

/**
 * Solves every primitive of `asset` in json order. Returns the reports, the replacements
 * for primitives whose geometry changes and, with `pictures` true, the UV picture data of
 * the primitives with findings.
 */
export function solveAsset(asset: Asset, options: ProcessOptions, pictures = false): AssetSolve {
  const primitives: PrimitiveReport[] = [];
  const replacements = new Map<number, PrimitiveReplacement>();
  const shown: UvPicture[] = [];
  const solved = new Map<string, { report: PrimitiveReport; replacement: PrimitiveReplacement | null }>();
  const scratch = createCompactScratch();
  for (let i = 0; i < asset.primitives.length; i++) {
    const p = asset.primitives[i];
    const key = shareKey(asset, p, options);
    const earlier = key === null ? undefined : solved.get(key);
    if (earlier && !pictures) {
      primitives.push(sharedReport(earlier.report, p, tangentNeedOf(asset.json, p.material).needsTangents));
      if (earlier.replacement) replacements.set(i, earlier.replacement);
      continue;
    }
    const r = solvePrimitive(asset, p, options, pictures, scratch);
    primitives.push(r.report);
    const replacement = earlier ? earlier.replacement : r.replacement;
    if (replacement) replacements.set(i, replacement);
    if (r.picture) shown.push(r.picture);
    if (key !== null && !earlier) solved.set(key, { report: r.report, replacement: r.replacement });
  }
  return { primitives, replacements, pictures: shown };
}

/**
 * What makes two glTF primitives bake identically: the same accessors (attributes, morph
 * targets, indices; the same Draco stream), mode, UV set, texture transform and whether they
 * take part. Null for OBJ primitives (their geometry is not in accessors). Options are the
 * same for the whole asset.
 */
function shareKey(asset: Asset, p: PrimitiveData, options: ProcessOptions): string | null {
  if (asset.container === 'obj') return null;
  const jp = asset.json.meshes?.[p.mesh]?.primitives?.[p.primitive];
  if (!jp || typeof jp !== 'object') return null;
  const need = tangentNeedOf(asset.json, p.material);
  const uvSet = options.uv ?? need.texCoord;
  const takesPart = need.needsTangents || options.allPrimitives;
  return JSON.stringify([jp.attributes, jp.targets ?? [], jp.indices ?? null, p.mode, jp.extensions?.KHR_draco_mesh_compression ?? null,
    uvSet, solveTransform(need, uvSet), takesPart]);
}

/** The report of a primitive that shares an earlier one's solve, under its own identity. */
function sharedReport(r: PrimitiveReport, p: PrimitiveData, normalMapped: boolean): PrimitiveReport {
  const copy = structuredClone(r);
  copy.mesh = p.mesh;
  copy.meshName = p.meshName;
  copy.primitive = p.primitive;
  copy.material = p.material;
  copy.normalMapped = normalMapped;
  return copy;
}

function gatherFloats(src: Float32Array, k: number, source: Uint32Array): Float32Array {
  const out = new Float32Array(source.length * k);
  for (let i = 0; i < source.length; i++) {
    const s = source[i] * k, o = i * k;
    for (let j = 0; j < k; j++) out[o + j] = src[s + j];
  }
  return out;
}
