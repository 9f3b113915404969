/**
 * Property-based fuzzing of the whole per-file pipeline (read -> solve -> encode -> write)
 * with fast-check: valid GLB, .gltf and OBJ files are mutated (bit flips, byte edits,
 * truncation, inserted and deleted ranges, JSON field swaps, huge numbers, type confusion,
 * OBJ line and token edits) and baked from disk.
 *
 * Properties, for every case: no exception escapes; the file either bakes ('ok', and the
 * output reads back) or fails with a known, non-internal error code and a one-line message,
 * leaving no output and no temporary file; the input folder is byte-for-byte unchanged; and
 * no case runs longer than CASE_BOUND_MS (a hang detector, far above any real case).
 *
 * Runs FUZZ_RUNS cases per property (default 150: a few hundred in `npm test`);
 * `npm run fuzz` runs 10,000 per property. FUZZ_SEED picks another seed (default fixed).
 */
import { createHash } from 'node:crypto';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ErrorCode } from '../../src/mesh/errors.js';
import { defaultProcessOptions, type ProcessOptions } from '../../src/lib/options.js';
import { processFile, readAsset, type FileJob } from '../../src/lib/processFile.js';
import { buildGltf, glbBytes, type BuildPrimitive } from '../helpers/gltfBuilder.js';

const RUNS = Number(process.env.FUZZ_RUNS ?? 150);
const SEED = Number(process.env.FUZZ_SEED ?? 20261201);
/** Wall-clock bound per case: a hang detector, not a speed test (cases take milliseconds). */
const CASE_BOUND_MS = 30_000;
/** vitest's own limit for one property: the cases plus headroom. */
const PROPERTY_TIMEOUT_MS = Math.max(120_000, RUNS * 200);

/** Codes a refusal may carry. 'internal' (a programming error) and 'timeout' (batch only) are not among them. */
const REFUSAL_CODES: ErrorCode[] = [
  'unsupported-format', 'read-failed', 'empty-file', 'bad-glb', 'bad-json', 'bad-gltf', 'bad-accessor',
  'bad-index', 'bad-uri', 'missing-resource', 'unsupported-feature', 'bad-obj', 'too-large', 'usage',
];

let root = '';
let inDir = '';
let caseNo = 0;
const seen: Record<string, Map<string, number>> = { glb: new Map(), gltf: new Map(), obj: new Map() };

// The base asset: a quad (two triangles) with normals, quantized UVs, a sparse attribute, a
// morph target, interleaved vertex data and a normal-mapped material whose image is a file.
//   3 ---- 2
//   |    / |
//   0 ---- 1
function baseGltf(): { json: any; bin: Uint8Array } {
  const prim: BuildPrimitive = {
    attributes: {
      POSITION: { array: new Float32Array([0, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0]), type: 'VEC3' },
      NORMAL: { array: new Float32Array([0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1]), type: 'VEC3' },
      TEXCOORD_0: { array: new Uint16Array([0, 65535, 65535, 65535, 65535, 0, 0, 0]), type: 'VEC2', normalized: true },
      _S: { array: new Float32Array(4), type: 'SCALAR', noBufferView: true, sparse: { indices: [1, 2], values: new Float32Array([5, 6]) } },
    },
    indices: new Uint16Array([0, 1, 2, 0, 2, 3]),
    targets: [{ POSITION: { array: new Float32Array(12), type: 'VEC3' } }],
    material: 0,
  };
  const a = buildGltf([prim], { interleaved: true });
  a.json.materials[0].normalTexture = { index: 0 };
  a.json.textures = [{ source: 0 }];
  a.json.images = [{ uri: 'tex.png' }];
  return a;
}

const BASE = baseGltf();
const BASE_GLB = glbBytes(BASE.json, BASE.bin);
const BASE_GLTF_JSON = (() => {
  const j = structuredClone(BASE.json);
  j.buffers[0].uri = 'model.bin';
  return j;
})();
const BASE_OBJ = [
  'mtllib model.mtl',
  'o panel',
  'v 0 0 0', 'v 1 0 0', 'v 1 1 0', 'v 0 1 0', 'v 2 0 0',
  'vt 0 0', 'vt 1 0', 'vt 1 1', 'vt 0 1',
  'vn 0 0 1',
  'usemtl painted',
  'f 1/1/1 2/2/1 3/3/1 4/4/1',
  'f 2/2/1 5/3/1 3/3/1',
  'usemtl bare',
  'f -3/1/1 -4/2/1 -2/4/1',
].join('\n') + '\n';

function sha256(bytes: Uint8Array): string {
  return createHash('sha256').update(bytes).digest('hex');
}

/** sha256 of every file in the input folder. */
function snapshot(): Record<string, string> {
  const out: Record<string, string> = {};
  for (const n of fs.readdirSync(inDir).sort()) out[n] = sha256(fs.readFileSync(path.join(inDir, n)));
  return out;
}

function listAll(dir: string): string[] {
  if (!fs.existsSync(dir)) return [];
  return fs.readdirSync(dir, { recursive: true, encoding: 'utf8' }).sort();
}

beforeAll(() => {
  root = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-fuzz-'));
  inDir = path.join(root, 'in');
  fs.mkdirSync(inDir);
  // The files a mutated asset may still reach: its buffer, material library and image.
  fs.writeFileSync(path.join(inDir, 'model.bin'), BASE.bin);
  fs.writeFileSync(path.join(inDir, 'model.mtl'), 'newmtl painted\nKd 0.5 0.5 0.5\nnorm tex.png\nnewmtl bare\n');
  fs.writeFileSync(path.join(inDir, 'tex.png'), new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 0]));
});
afterAll(() => {
  fs.rmSync(root, { recursive: true, force: true });
  const total = Object.values(seen).reduce((s, m) => s + [...m.values()].reduce((a, b) => a + b, 0), 0);
  const lines = Object.entries(seen).map(([k, m]) => `${k}: ${[...m].sort().map(([c, n]) => `${c} ${n}`).join(', ')}`);
  console.log(`fuzz: ${total} cases (seed ${SEED})\n${lines.join('\n')}`);
});

/** Options a case may bake with. */
const optionsArb = fc.record({
  method: fc.constantFrom<'mikktspace' | 'lengyel'>('mikktspace', 'lengyel'),
  normals: fc.constantFrom<'keep' | 'flat' | 'smooth'>('keep', 'flat', 'smooth'),
  keepExisting: fc.boolean(),
  format: fc.constantFrom<'glb' | 'gltf' | null>('glb', 'gltf', null),
});

/**
 * Writes `bytes` as the input `model.<ext>`, bakes it, and checks every property.
 * Returns the outcome ('ok' or the error code).
 */
async function bakeCase(ext: 'glb' | 'gltf' | 'obj', bytes: Uint8Array, o: { method: any; normals: any; keepExisting: boolean; format: 'glb' | 'gltf' | null }): Promise<string> {
  const input = path.join(inDir, `model.${ext}`);
  fs.writeFileSync(input, bytes);
  const before = snapshot();
  const outDir = path.join(root, 'out', String(caseNo++));
  const outExt = o.format ?? (ext === 'gltf' ? 'gltf' : 'glb');
  const output = path.join(outDir, `model.${outExt}`);
  const options: ProcessOptions = { ...defaultProcessOptions(), allPrimitives: true, method: o.method, normals: o.normals, keepExisting: o.keepExisting };
  const job: FileJob = { command: 'bake', input, output, format: o.format, dryRun: false, displayInput: `model.${ext}`, displayOutput: `out/model.${outExt}` };
  const started = performance.now();
  const report = await processFile(job, options);
  const elapsed = performance.now() - started;
  expect(elapsed, 'a case ran past the hang bound').toBeLessThan(CASE_BOUND_MS);
  expect(snapshot(), 'the input folder changed').toEqual(before);
  const written = listAll(outDir);
  expect(written.filter((n) => n.endsWith('.tmp')), 'temporary files left').toEqual([]);
  let outcome: string;
  if (report.status === 'ok') {
    expect(report.error).toBeNull();
    expect(written).toContain(`model.${outExt}`);
    // What we wrote, we can read.
    await readAsset(output);
    outcome = 'ok';
  } else {
    expect(report.status).toBe('failed');
    const e = report.error!;
    expect(REFUSAL_CODES, `${e.code}: ${e.message}`).toContain(e.code);
    expect(e.message.length).toBeGreaterThan(0);
    expect(e.message).not.toMatch(/[\r\n]/);
    expect(written, 'a failed file left output').toEqual([]);
    outcome = e.code;
  }
  fs.rmSync(outDir, { recursive: true, force: true });
  const m = seen[ext];
  m.set(outcome, (m.get(outcome) ?? 0) + 1);
  return outcome;
}

// ---------------------------------------------------------------------------------------------
// Byte-level mutations (any format)

/**
 * Positions are fractions of the current length, so edits land anywhere whatever the size.
 * (From integers: fast-check's doubles favour tiny magnitudes, which would pin every edit
 * to the start of the file.)
 */
const fraction = fc.integer({ min: 0, max: 0xffff }).map((n) => n / 0x10000);
const byteEditArb: fc.Arbitrary<{ kind: string; f: number; [k: string]: any }> = fc.oneof(
  fc.record({ kind: fc.constant('flip'), f: fraction, bit: fc.integer({ min: 0, max: 7 }) }),
  fc.record({ kind: fc.constant('set'), f: fraction, value: fc.integer({ min: 0, max: 255 }) }),
  fc.record({ kind: fc.constant('truncate'), f: fraction }),
  fc.record({ kind: fc.constant('delete'), f: fraction, length: fc.integer({ min: 1, max: 64 }) }),
  fc.record({ kind: fc.constant('insert'), f: fraction, bytes: fc.uint8Array({ minLength: 1, maxLength: 16 }) }),
  // A little-endian uint32 written over 4 bytes: lengths, counts and chunk types in a GLB.
  fc.record({ kind: fc.constant('u32'), f: fraction, value: fc.oneof(fc.constantFrom(0, 1, 3, 4, 0x7fffffff, 0x80000000, 0xffffffff, 0x4e4f534a, 0x004e4942), fc.nat()) }),
);

function applyByteEdits(base: Uint8Array, edits: { kind: string; f: number; [k: string]: any }[]): Uint8Array {
  let b = base.slice();
  for (const e of edits) {
    const at = Math.floor(e.f * Math.max(1, b.length));
    switch (e.kind) {
      case 'flip':
        if (b.length) b[at] ^= 1 << e.bit;
        break;
      case 'set':
        if (b.length) b[at] = e.value;
        break;
      case 'truncate':
        b = b.slice(0, at);
        break;
      case 'delete':
        b = new Uint8Array([...b.subarray(0, at), ...b.subarray(at + e.length)]);
        break;
      case 'insert':
        b = new Uint8Array([...b.subarray(0, at), ...e.bytes, ...b.subarray(at)]);
        break;
      case 'u32':
        if (b.length >= 4) new DataView(b.buffer).setUint32(Math.min(at, b.length - 4), e.value >>> 0, true);
        break;
    }
  }
  return b;
}

// ---------------------------------------------------------------------------------------------
// JSON-level mutations (glTF)

/** Values that confuse types and sizes. */
const weirdValue: fc.Arbitrary<unknown> = fc.oneof(
  fc.constantFrom(-1, 0, 1, 2, 3, 3.5, -0.5, 2 ** 31, 2 ** 32, 2 ** 32 + 1, 2 ** 53, 2 ** 53 + 2, 1e308, -1e308, Number.MAX_SAFE_INTEGER,
    5120, 5121, 5122, 5123, 5125, 5126, 5130, 34962, 34963, 'SCALAR', 'VEC2', 'VEC3', 'VEC4', 'MAT4', 'x', '', '0', '1e9',
    'data:,', 'data:application/octet-stream;base64,AAAA', '../model.bin', '/etc/passwd', 'model.bin', 'tex.png', 'http://x/y',
    '%2e%2e/x', '__proto__', 'constructor', null, true, false),
  fc.constant({}), fc.constant([]), fc.constant([0]), fc.constant({ bufferView: 0 }),
  fc.integer({ min: -10, max: 100 }),
  fc.integer({ min: 0, max: 0x7fffffff }),
  fc.double({ noNaN: true }),
  fc.string({ maxLength: 8 }),
  fc.jsonValue({ maxDepth: 2 }),
);

type Slot = [holder: any, key: string | number];

/** Every (holder, key) slot of a JSON tree, in a fixed order. */
function slots(json: any): Slot[] {
  const out: Slot[] = [];
  const stack: any[] = [json];
  while (stack.length) {
    const v = stack.pop();
    if (v === null || typeof v !== 'object') continue;
    for (const k of Object.keys(v)) {
      out.push([v, Array.isArray(v) ? Number(k) : k]);
      stack.push(v[k]);
    }
  }
  return out;
}

const jsonEditArb = fc.oneof(
  fc.record({ kind: fc.constant('set'), f: fraction, value: weirdValue }),
  fc.record({ kind: fc.constant('swap'), f: fraction, g: fraction }),
  fc.record({ kind: fc.constant('delete'), f: fraction }),
  fc.record({ kind: fc.constant('scale'), f: fraction, factor: fc.constantFrom(2, 1000, 2 ** 20, 2 ** 31, -1) }),
  fc.record({ kind: fc.constant('copy'), f: fraction, g: fraction }),
);

function applyJsonEdits(base: any, edits: any[]): any {
  const json = structuredClone(base);
  for (const e of edits) {
    const all = slots(json);
    if (all.length === 0) break;
    const [holder, key] = all[Math.floor(e.f * all.length)];
    if (e.kind === 'set') holder[key] = structuredClone(e.value);
    else if (e.kind === 'delete') {
      if (Array.isArray(holder)) holder.splice(key as number, 1);
      else delete holder[key];
    } else if (e.kind === 'scale') {
      if (typeof holder[key] === 'number') holder[key] *= e.factor;
    } else {
      // swap / copy: field swaps between two places of the document
      const [h2, k2] = all[Math.floor(e.g * all.length)];
      const a = holder[key];
      const b = h2[k2];
      if (e.kind === 'swap') {
        holder[key] = structuredClone(b);
        h2[k2] = structuredClone(a);
      } else holder[key] = structuredClone(b);
    }
  }
  return json;
}

// ---------------------------------------------------------------------------------------------
// OBJ mutations: lines and tokens

const objToken = fc.oneof(
  fc.constantFrom('0', '-0', '1', '-1', '5', '-9', '2147483648', '-2147483649', '99999999999999999999', '1e39', '-1e39', '1e400',
    'nan', 'inf', '', '/', '//', '1//', '1/', '/1', '1/2/3/4', '1/x/1', '0.5', '.', 'e', '+', '-', '1.5/2', '\\', '#', 'v', 'f'),
  fc.integer({ min: -20, max: 20 }).map(String),
  fc.double({ noNaN: false }).map(String),
  fc.string({ maxLength: 6 }),
);
const objLine = fc.oneof(
  fc.tuple(fc.constantFrom('v', 'vt', 'vn', 'f', 'fo', 'l', 'p', 'usemtl', 'mtllib', 'o', 'g', 's'), fc.array(objToken, { maxLength: 6 })).map(([k, t]) => [k, ...t].join(' ')),
  fc.string({ maxLength: 20 }),
  fc.constantFrom('mtllib ../outside.mtl', 'mtllib /etc/passwd', 'mtllib missing.mtl', 'usemtl nowhere', 'f 1 2 3 \\', '\\', 'f'),
);
const objEditArb = fc.oneof(
  fc.record({ kind: fc.constant('replace-token'), f: fraction, g: fraction, token: objToken }),
  fc.record({ kind: fc.constant('insert-line'), f: fraction, line: objLine }),
  fc.record({ kind: fc.constant('delete-line'), f: fraction }),
  fc.record({ kind: fc.constant('duplicate-line'), f: fraction }),
  fc.record({ kind: fc.constant('swap-lines'), f: fraction, g: fraction }),
  fc.record({ kind: fc.constant('bytes'), edit: byteEditArb }),
);

function applyObjEdits(base: string, edits: any[]): Uint8Array {
  let bytes = new TextEncoder().encode(base);
  for (const e of edits) {
    if (e.kind === 'bytes') {
      bytes = applyByteEdits(bytes, [e.edit]);
      continue;
    }
    const lines = new TextDecoder().decode(bytes).split('\n');
    const i = Math.floor(e.f * lines.length);
    if (e.kind === 'replace-token') {
      const toks = lines[i].split(' ');
      toks[Math.floor(e.g * toks.length)] = e.token;
      lines[i] = toks.join(' ');
    } else if (e.kind === 'insert-line') lines.splice(i, 0, e.line);
    else if (e.kind === 'delete-line') lines.splice(i, 1);
    else if (e.kind === 'duplicate-line') lines.splice(i, 0, lines[i]);
    else {
      const j = Math.floor(e.g * lines.length);
      [lines[i], lines[j]] = [lines[j], lines[i]];
    }
    bytes = new TextEncoder().encode(lines.join('\n'));
  }
  return bytes;
}

// ---------------------------------------------------------------------------------------------

const params = { numRuns: RUNS, seed: SEED, endOnFailure: true } as const;

describe('fuzzing the read -> solve -> write pipeline', () => {
  it('the unmutated inputs bake', async () => {
    const o = { method: 'mikktspace', normals: 'keep', keepExisting: false, format: null } as const;
    expect(await bakeCase('glb', BASE_GLB, o)).toBe('ok');
    expect(await bakeCase('gltf', new TextEncoder().encode(JSON.stringify(BASE_GLTF_JSON)), o)).toBe('ok');
    expect(await bakeCase('obj', new TextEncoder().encode(BASE_OBJ), o)).toBe('ok');
  });

  it(`GLB: byte edits and JSON-chunk edits (${RUNS} cases)`, async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.oneof(
          fc.array(byteEditArb, { minLength: 1, maxLength: 6 }).map((edits) => applyByteEdits(BASE_GLB, edits)),
          fc.array(jsonEditArb, { minLength: 1, maxLength: 4 }).map((edits) => glbBytes(applyJsonEdits(BASE.json, edits), BASE.bin)),
        ),
        optionsArb,
        async (bytes, o) => {
          await bakeCase('glb', bytes, o);
        },
      ),
      params,
    );
  }, PROPERTY_TIMEOUT_MS);

  it(`.gltf: JSON field edits, then text edits (${RUNS} cases)`, async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.array(jsonEditArb, { minLength: 1, maxLength: 5 }),
        fc.oneof({ arbitrary: fc.constant([]), weight: 4 }, { arbitrary: fc.array(byteEditArb, { minLength: 1, maxLength: 2 }), weight: 1 }),
        optionsArb,
        async (jsonEdits, byteEdits, o) => {
          const text = new TextEncoder().encode(JSON.stringify(applyJsonEdits(BASE_GLTF_JSON, jsonEdits)));
          await bakeCase('gltf', applyByteEdits(text, byteEdits), o);
        },
      ),
      params,
    );
  }, PROPERTY_TIMEOUT_MS);

  it(`OBJ: line and token edits (${RUNS} cases)`, async () => {
    await fc.assert(
      fc.asyncProperty(fc.array(objEditArb, { minLength: 1, maxLength: 6 }), optionsArb, async (edits, o) => {
        await bakeCase('obj', applyObjEdits(BASE_OBJ, edits), o);
      }),
      params,
    );
  }, PROPERTY_TIMEOUT_MS);

  it(`GLB: hostile values in the vertex data and indices of a valid file (${RUNS} cases)`, async () => {
    // The structure stays valid; only stored numbers change: NaN, infinities, huge, tiny and
    // denormal floats anywhere in the vertex data; other indices (mostly in range, which makes
    // degenerate and repeated triangles). Values never refuse a file: the only refusal allowed
    // is an index out of range.
    const vertexView = BASE.json.bufferViews[BASE.json.accessors[BASE.json.meshes[0].primitives[0].attributes.POSITION].bufferView];
    const indexView = BASE.json.bufferViews[BASE.json.accessors[BASE.json.meshes[0].primitives[0].indices].bufferView];
    const floatArb = fc.oneof(
      fc.constantFrom(Number.NaN, Infinity, -Infinity, 0, -0, 1e38, -1e38, 3.4e38, 1e-45, -1e-45, 1e-38, 1, -1),
      fc.float(),
    );
    await fc.assert(
      fc.asyncProperty(
        fc.array(fc.record({ f: fraction, value: floatArb }), { minLength: 1, maxLength: 12 }),
        fc.array(fc.record({ f: fraction, value: fc.oneof({ arbitrary: fc.integer({ min: 0, max: 3 }), weight: 4 }, { arbitrary: fc.integer({ min: 0, max: 0xffff }), weight: 1 }) }), { maxLength: 2 }),
        optionsArb,
        async (floats, indices, o) => {
          const bin = BASE.bin.slice();
          const dv = new DataView(bin.buffer);
          for (const e of floats) {
            const slots = Math.floor(vertexView.byteLength / 4);
            dv.setFloat32(vertexView.byteOffset + 4 * Math.floor(e.f * slots), e.value, true);
          }
          for (const e of indices) {
            const slots = Math.floor(indexView.byteLength / 2);
            dv.setUint16(indexView.byteOffset + 2 * Math.floor(e.f * slots), e.value, true);
          }
          const outcome = await bakeCase('glb', glbBytes(BASE.json, bin), o);
          expect(indices.length > 0 ? ['ok', 'bad-index'] : ['ok']).toContain(outcome);
        },
      ),
      params,
    );
  }, PROPERTY_TIMEOUT_MS);

  it('the mutations reach many layers of each reader', () => {
    // Not a count of our own results: only that the fuzzer is not stuck at the first check.
    expect(seen.glb.size).toBeGreaterThan(3);
    expect(seen.gltf.size).toBeGreaterThan(3);
    expect(seen.obj.size).toBeGreaterThan(1);
    expect(seen.glb.get('ok') ?? 0).toBeGreaterThan(0);
    expect(seen.obj.get('ok') ?? 0).toBeGreaterThan(0);
  });
});
