/**
 * The outputs pinned by test/lib/pinnedOutputs.test.ts, computed from the sources: SHA-256 of
 * what each case bakes, for both methods. Shared by the test and scripts/make-output-pins.mjs
 * (which writes fixtures/pins/outputs.json), so both compute the same thing the same way.
 *
 * Cases, in groups (a group whose files are absent is left out and the test says SKIPPED):
 * - `meshes`: computeFrames on the test meshes (test/helpers/surfaces.ts) and the bench meshes
 *   (bench/cases.js) at small sizes: tangents, indices, source vertices, undefined corners, stats;
 * - `values`: the hostile-value fixtures (fixtures/values/: NaN, infinities, degenerate and
 *   empty primitives), `demo`: the demo props (examples/harbor-props), `samples`: the shared glTF
 *   samples (../shared/datasets/gltf-samples): per file, each replacement's attributes, indices
 *   and morph targets and the primitive reports (every primitive, --all-primitives), and for
 *   `demo` and a few samples the whole encoded output files (default options).
 */
import { createHash } from 'node:crypto';
import { existsSync, readdirSync } from 'node:fs';
import * as path from 'node:path';
import { fileURLToPath } from 'node:url';
// @ts-ignore -- plain JS bench module (no declarations)
import { makeMesh } from '../../bench/cases.js';
import { computeFrames } from '../../src/frames/computeFrames.js';
import { encodeGltf } from '../../src/io/gltfWrite.js';
import type { AttributeData, PrimitiveReplacement } from '../../src/mesh/asset.js';
import type { FrameMethod, FrameOptions } from '../../src/mesh/types.js';
import { solveAsset } from '../../src/lib/bakeAsset.js';
import { defaultProcessOptions, type ProcessOptions } from '../../src/lib/options.js';
import { outputFormat, readAsset } from '../../src/lib/processFile.js';
import { cylinder, mirroredSheet, noisyScan, sphere, torus } from './surfaces.js';

export const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
export const samplesDir = path.resolve(repoRoot, '../shared/datasets/gltf-samples');
export const pinsFile = path.join(repoRoot, 'fixtures', 'pins', 'outputs.json');
export const METHODS: FrameMethod[] = ['mikktspace', 'lengyel'];

/** Pinned hashes: group -> case -> hex SHA-256. */
export type Pins = Record<string, Record<string, string>>;

/** Samples whose whole output files are pinned too (plain, interleaved, Draco, quantized, morphs, transforms). */
export const WHOLE_FILE_SAMPLES = [
  'Avocado/glTF-Draco/Avocado.gltf',
  'AnimatedMorphCube/glTF-Quantized/AnimatedMorphCube.gltf',
  'BoxInterleaved/glTF-Binary/BoxInterleaved.glb',
  'NormalTangentMirrorTest/glTF-Binary/NormalTangentMirrorTest.glb',
  'TextureTransformTest/glTF/TextureTransformTest.gltf',
];

function sha(...parts: (Uint8Array | ArrayBufferView | string)[]): string {
  const h = createHash('sha256');
  for (const p of parts) {
    if (typeof p === 'string') h.update(p);
    else h.update(new Uint8Array(p.buffer, p.byteOffset, p.byteLength));
    h.update('\0');
  }
  return h.digest('hex');
}

/** The mesh cases: name -> frame input and options. */
function meshCases(): { name: string; mesh: { positions: Float32Array; normals: Float32Array; uvs: Float32Array; indices: Uint32Array }; options: FrameOptions }[] {
  const out = [];
  const surfaces = [
    sphere({ n: 12 }), sphere({ n: 10, uvOrigin: 'top-left' }), cylinder({ n: 9 }), torus({ n: 10 }),
    mirroredSheet({ n: 8 }), mirroredSheet({ n: 8, seam: 'shared' }), noisyScan({ n: 24 }), noisyScan({ n: 20, uvOrigin: 'top-left', seed: 5 }),
  ];
  surfaces.forEach((s, i) => {
    for (const method of METHODS) out.push({ name: `${i}-${s.name}-${s.uvOrigin}-${method}`, mesh: s, options: { method, uvOrigin: s.uvOrigin } });
  });
  for (const weight of ['angle', 'area', 'uniform'] as const) {
    out.push({ name: `6-noisyScan-lengyel-${weight}`, mesh: surfaces[6], options: { method: 'lengyel', weight, uvOrigin: 'bottom-left' } });
  }
  for (const kind of ['sphere', 'scan']) {
    const m = makeMesh(kind, 20_000);
    for (const method of METHODS) out.push({ name: `bench-${kind}-20k-${method}`, mesh: m, options: { method } });
  }
  return out as any;
}

/** Pins of the mesh cases (always present). */
export function meshPins(): Record<string, string> {
  const pins: Record<string, string> = {};
  for (const c of meshCases()) {
    const r = computeFrames(c.mesh, c.options);
    pins[c.name] = sha(r.tangents, r.indices, r.sourceVertex, r.undefinedCorners, JSON.stringify(r.stats));
  }
  return pins;
}

function attributeHash(a: AttributeData): string {
  return sha(`${a.type} ${a.componentType} ${a.normalized}`, a.array);
}

function replacementHash(r: PrimitiveReplacement): string {
  const parts: (string | Uint32Array)[] = [];
  for (const name of Object.keys(r.attributes).sort()) parts.push(`${name}=${attributeHash(r.attributes[name])}`);
  parts.push(r.indices);
  r.targets.forEach((t, i) => {
    for (const name of Object.keys(t).sort()) parts.push(`target ${i} ${name}=${attributeHash(t[name])}`);
  });
  return sha(...parts);
}

/** Report fields that depend on the machine or the clock (none in a primitive report today). */
function primitiveReports(solved: ReturnType<typeof solveAsset>): string {
  return JSON.stringify(solved.primitives);
}

/** Pins of one asset file for both methods; with `whole`, also the encoded output files. */
export async function filePins(file: string, key: string, whole: boolean): Promise<Record<string, string>> {
  const pins: Record<string, string> = {};
  for (const method of METHODS) {
    const asset = await readAsset(file);
    const all: ProcessOptions = { ...defaultProcessOptions(), method, allPrimitives: true };
    const solved = solveAsset(asset, all);
    for (const [i, r] of [...solved.replacements].sort((a, b) => a[0] - b[0])) pins[`${key} ${method} primitive ${i}`] = replacementHash(r);
    pins[`${key} ${method} reports`] = sha(primitiveReports(solved));
    if (whole) {
      const plain = solveAsset(asset, { ...defaultProcessOptions(), method });
      const format = outputFormat(asset.container, null);
      const outPath = path.join(path.sep, 'pins', `${path.basename(file, path.extname(file))}.${format}`);
      for (const f of encodeGltf(asset, plain.replacements, { format, outPath })) {
        pins[`${key} ${method} file ${path.relative(path.dirname(outPath), f.path)}`] = sha(f.bytes);
      }
    }
  }
  return pins;
}

/** Mesh files under `dir` (relative paths, sorted). */
export function meshFiles(dir: string): string[] {
  const out: string[] = [];
  const walk = (d: string): void => {
    for (const e of readdirSync(d, { withFileTypes: true })) {
      const p = path.join(d, e.name);
      if (e.isDirectory()) walk(p);
      else if (/\.(glb|gltf|obj)$/i.test(e.name)) out.push(path.relative(dir, p).split(path.sep).join('/'));
    }
  };
  walk(dir);
  return out.sort();
}

/** The file groups: name -> folder, its files, and which are pinned whole. */
export function fileGroups(): { group: string; dir: string; present: boolean; whole: (rel: string) => boolean }[] {
  return [
    { group: 'values', dir: path.join(repoRoot, 'fixtures', 'values'), present: true, whole: () => false },
    { group: 'demo', dir: path.join(repoRoot, 'examples', 'harbor-props'), present: true, whole: () => true },
    { group: 'samples', dir: samplesDir, present: existsSync(samplesDir), whole: (rel) => WHOLE_FILE_SAMPLES.includes(rel) },
  ];
}

/** Pins of every file of one group. */
export async function groupPins(dir: string, whole: (rel: string) => boolean): Promise<Record<string, string>> {
  const pins: Record<string, string> = {};
  for (const rel of meshFiles(dir)) {
    try {
      Object.assign(pins, await filePins(path.join(dir, rel), rel, whole(rel)));
    } catch (err) {
      // A file the reader refuses is pinned by its error code.
      pins[`${rel} refused`] = sha(String((err as { code?: string }).code ?? err));
    }
  }
  return pins;
}
