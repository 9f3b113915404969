// Every real-world sample bakes with --all-primitives, validates, keeps its structure and its
// per-corner data, and bakes to identical bytes across runs and --jobs values.
// Source of the assets: the Khronos glTF 2.0 sample assets (../shared/datasets/gltf-samples,
// described by its MANIFEST.md).
import { existsSync, readFileSync, readdirSync, statSync } from 'node:fs';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import * as path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readGltf } from '../../src/io/gltfRead.js';
import type { Asset, AttributeData, PrimitiveData } from '../../src/mesh/asset.js';
import { expandToTriangleList, isTriangleMode } from '../../src/mesh/triangulate.js';
import { runCli } from '../helpers/cli.js';
import { validateGltfFile } from '../helpers/validate.js';

const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
const samples = path.resolve(repoRoot, '../shared/datasets/gltf-samples');
const present = existsSync(samples);
if (!present) console.warn(`SKIPPED: glTF fidelity checks: sample assets not found at ${samples}`);

/** Every .gltf / .glb under `dir`, relative, sorted. */
function sampleFiles(dir: string): string[] {
  const out: string[] = [];
  const walk = (d: string) => {
    for (const e of readdirSync(d).sort()) {
      const p = path.join(d, e);
      if (statSync(p).isDirectory()) walk(p);
      else if (/\.(gltf|glb)$/i.test(e)) out.push(path.relative(dir, p).split(path.sep).join('/'));
    }
  };
  walk(dir);
  return out;
}

/**
 * Images the MANIFEST says each variant lacks: "no: glTF-Draco (missing 3 images); ..." in the
 * "Complete?" column of the Models table, keyed "<Model>/<variant>".
 */
function manifestMissingImages(): Map<string, number> {
  const text = readFileSync(path.join(samples, 'MANIFEST.md'), 'utf8');
  const out = new Map<string, number>();
  for (const line of text.split('\n')) {
    const cells = line.split('|').map((c) => c.trim());
    if (cells.length < 6 || !/^`gltf-samples\//.test(cells[2] ?? '')) continue;
    const model = cells[1];
    for (const m of cells[4].matchAll(/([\w-]+) \(missing (\d+) images?\)/g)) out.set(`${model}/${m[1]}`, Number(m[2]));
  }
  return out;
}

const COUNTED = ['nodes', 'meshes', 'materials', 'textures', 'images', 'animations', 'skins', 'cameras', 'samplers', 'scenes'] as const;
const COMPRESSION = new Set(['KHR_draco_mesh_compression', 'EXT_meshopt_compression', 'KHR_meshopt_compression']);

/** Names of every extension object anywhere in the JSON (compression ones left out), with counts. */
function extensionObjects(json: unknown): Record<string, number> {
  const out: Record<string, number> = {};
  const stack: unknown[] = [json];
  while (stack.length) {
    const v = stack.pop();
    if (v === null || typeof v !== 'object') continue;
    if (!Array.isArray(v) && (v as any).extensions && typeof (v as any).extensions === 'object') {
      for (const k of Object.keys((v as any).extensions)) if (!COMPRESSION.has(k)) out[k] = (out[k] ?? 0) + 1;
    }
    for (const c of Object.values(v as object)) stack.push(c);
  }
  return out;
}

/** The structural counts the bake must keep. */
function structure(a: Asset) {
  const json = a.json;
  const counts: Record<string, number> = {};
  for (const k of COUNTED) counts[k] = Array.isArray(json[k]) ? json[k].length : 0;
  const meshes: any[] = json.meshes ?? [];
  counts.primitives = meshes.reduce((s, m) => s + m.primitives.length, 0);
  counts.morphTargets = meshes.reduce((s, m) => s + m.primitives.reduce((t: number, p: any) => t + (p.targets?.length ?? 0), 0), 0);
  counts.animationChannels = (json.animations ?? []).reduce((s: number, an: any) => s + an.channels.length, 0);
  const used = (json.extensionsUsed ?? []).filter((e: string) => !COMPRESSION.has(e) && e !== 'KHR_mesh_quantization').sort();
  return { counts, used, extensionObjects: extensionObjects(json), extras: JSON.stringify(collectExtras(json)) };
}

/** Every `extras` value with its JSON path (mesh primitives' own extras included). */
function collectExtras(json: unknown, at = '', out: [string, unknown][] = []): [string, unknown][] {
  if (json === null || typeof json !== 'object') return out;
  for (const [k, v] of Object.entries(json as object)) {
    if (k === 'extras') out.push([at, v]);
    else if (k !== 'accessors' && k !== 'bufferViews' && k !== 'buffers') collectExtras(v, `${at}/${k}`, out);
  }
  return out;
}

/** Per corner of the expanded triangle list, a comparison of every attribute but TANGENT. */
function cornerMismatches(inP: PrimitiveData, outP: PrimitiveData, skipNormal: boolean): string[] {
  const bad: string[] = [];
  if (!isTriangleMode(inP.mode)) {
    if (outP.mode !== inP.mode) bad.push(`mode ${inP.mode} became ${outP.mode}`);
    return bad;
  }
  const count = (p: PrimitiveData) => {
    const a = p.attributes.POSITION ?? Object.values(p.attributes)[0];
    return a.array.length / a.itemSize;
  };
  const ti = expandToTriangleList(inP.mode, inP.indices, count(inP));
  const to = expandToTriangleList(outP.mode, outP.indices, count(outP));
  if (ti.length !== to.length) return [`${ti.length / 3} triangles became ${to.length / 3}`];
  const compare = (name: string, a: AttributeData | undefined, b: AttributeData | undefined) => {
    if (!a) return;
    if (!b) return void bad.push(`${name} missing`);
    if (a.componentType !== b.componentType || a.normalized !== b.normalized || a.itemSize !== b.itemSize) return void bad.push(`${name} format changed`);
    const k = a.itemSize;
    for (let c = 0; c < ti.length; c++) {
      for (let j = 0; j < k; j++) {
        if (!Object.is(a.array[ti[c] * k + j], b.array[to[c] * k + j])) return void bad.push(`${name} differs at corner ${c}`);
      }
    }
  };
  for (const [sem, a] of Object.entries(inP.attributes)) {
    if (sem === 'TANGENT' || (sem === 'NORMAL' && skipNormal)) continue;
    compare(sem, a, outP.attributes[sem]);
  }
  if (inP.targets.length !== outP.targets.length) bad.push('morph target count changed');
  inP.targets.forEach((t, i) => {
    for (const [sem, a] of Object.entries(t)) if (sem !== 'TANGENT') compare(`target ${i} ${sem}`, a, outP.targets[i]?.[sem]);
  });
  return bad;
}

function filesUnder(dir: string): string[] {
  const out: string[] = [];
  const walk = (d: string) => {
    for (const e of readdirSync(d).sort()) {
      const p = path.join(d, e);
      if (statSync(p).isDirectory()) walk(p);
      else out.push(p);
    }
  };
  walk(dir);
  return out;
}

// With --compression none every output is decoded and plain, so each corner can be compared
// exactly; the default (keep, compressed as it came in) is checked in test/lib/compression.test.ts.
describe.skipIf(!present)('bake fidelity on every glTF sample (--all-primitives --compression none)', () => {
  let tmp = '';
  const rows: string[] = [];
  let files: string[] = [];
  let report: any = null;
  let bakeSeconds = 0;
  const assets = new Map<string, Promise<Asset>>();
  /** Each input and output is read once and shared by the checks below. */
  const read = (file: string) => {
    let a = assets.get(file);
    if (!a) {
      a = readGltf(file);
      assets.set(file, a);
    }
    return a;
  };

  beforeAll(async () => {
    tmp = await mkdtemp(path.join(tmpdir(), 'tanframe-fidelity-'));
    files = sampleFiles(samples);
    const started = performance.now();
    const r = await runCli(['bake', samples, '-o', path.join(tmp, 'a'), '--all-primitives', '--compression', 'none', '--jobs', '1', '--report', path.join(tmp, 'a.json'), '--quiet'], repoRoot);
    bakeSeconds = (performance.now() - started) / 1000;
    expect(r.stderr).toBe('');
    report = JSON.parse(readFileSync(path.join(tmp, 'a.json'), 'utf8'));
  });

  afterAll(async () => {
    if (rows.length) {
      console.log(
        [`glTF samples baked with --all-primitives in ${bakeSeconds.toFixed(2)} s (Khronos gltf-validator issues per output):`,
          `${'file'.padEnd(64)} ${'errors'.padStart(6)} ${'IO(missing img)'.padStart(15)} ${'warn'.padStart(5)} ${'info'.padStart(5)} ${'bake ms'.padStart(8)} ${'validate ms'.padStart(11)}`,
          ...rows].join('\n'),
      );
    }
    await rm(tmp, { recursive: true, force: true });
  });

  it('finds the 38 sample files the MANIFEST describes', () => {
    // Source: datasets/gltf-samples/MANIFEST.md, "Structure of each model file" table (38 rows).
    expect(files).toHaveLength(38);
  });

  it('bakes every file (no failures) and notes what it decompressed', () => {
    expect(report.files).toHaveLength(files.length);
    for (const f of report.files) expect(f.status, `${f.input}: ${JSON.stringify(f.error)}`).toBe('ok');
    const noted = report.files.filter((f: any) => (f.notes ?? []).some((n: string) => /decompressed KHR_draco_mesh_compression/.test(n))).map((f: any) => path.basename(f.input)).sort();
    const copied = report.files.filter((f: any) => (f.notes ?? []).includes("nothing to bake: written as the input's bytes")).map((f: any) => f.input.split(path.sep).join('/'));
    // Source: MANIFEST.md: the glTF-Draco variants of Avocado, Box and Duck use KHR_draco_mesh_compression;
    // Box has no texture coordinates, so nothing in it is baked and it is copied as it was.
    expect(noted).toEqual(['Avocado.gltf', 'Duck.gltf']);
    expect(copied.some((f: string) => f.endsWith('Box/glTF-Draco/Box.gltf'))).toBe(true);
  });

  it('every output validates with 0 errors; IO errors only for images the MANIFEST lists as missing, each a reader warning', async () => {
    const missing = manifestMissingImages();
    for (const rel of files) {
      const out = path.join(tmp, 'a', rel);
      const fr = report.files.find((f: any) => f.input.split(path.sep).join('/').endsWith(rel));
      const started = performance.now();
      // Source: Khronos gltf-validator (the standard's reference validator).
      const v = await validateGltfFile(out);
      const ms = performance.now() - started;
      const io = v.messages.filter((m) => m.startsWith('ERROR IO_ERROR '));
      const [model, variant] = rel.split('/');
      const expectedMissing = missing.get(`${model}/${variant}`) ?? 0;
      // Source: MANIFEST.md "Complete?" column (missing images per variant).
      expect(io.length, `${rel}: ${io.join('; ')}`).toBe(expectedMissing);
      const warned = fr.warnings.filter((w: string) => /^image '.*' not found/.test(w));
      expect(warned.length, rel).toBe(io.length);
      const inputJson = io.length ? (await read(path.join(samples, rel))).json : null;
      for (const m of io) {
        // Each IO error names an image whose absence the reader reported.
        const i = Number(/\/images\/(\d+)\/uri/.exec(m)?.[1]);
        const uri = inputJson?.images?.[i]?.uri;
        expect(typeof uri, `${rel}: ${m}`).toBe('string');
        expect(warned.some((w: string) => w.includes(`'${uri}'`)), `${rel}: ${m}`).toBe(true);
      }
      const infos = v.messages.filter((m) => m.startsWith('INFO ')).length;
      rows.push(`${rel.padEnd(64)} ${String(v.errors - io.length).padStart(6)} ${String(io.length).padStart(15)} ${String(v.warnings).padStart(5)} ${String(infos).padStart(5)} ${(fr.seconds * 1000).toFixed(0).padStart(8)} ${ms.toFixed(0).padStart(11)}`);
      expect(v.errors - io.length, `${rel}:\n${v.messages.filter((m) => m.startsWith('ERROR')).join('\n')}`).toBe(0);
    }
  });

  it('keeps the structure: counts, extensions, extras; drops only compression; copies files with nothing to bake', async () => {
    for (const rel of files) {
      const input = await read(path.join(samples, rel));
      const output = await read(path.join(tmp, 'a', rel));
      expect(structure(output), rel).toEqual(structure(input));
      const fr = report.files.find((f: any) => f.input.split(path.sep).join('/').endsWith(rel));
      if (fr.notes.includes("nothing to bake: written as the input's bytes")) {
        expect(readFileSync(path.join(tmp, 'a', rel)).equals(readFileSync(path.join(samples, rel))), rel).toBe(true);
        expect(fr.primitives.every((pr: any) => pr.action !== 'baked'), rel).toBe(true);
        continue;
      }
      for (const e of output.json.extensionsUsed ?? []) expect(COMPRESSION.has(e), `${rel}: ${e}`).toBe(false);
      expect(output.decompressed ?? [], rel).toEqual([]);
      // Baked primitives carry TANGENT; skipped ones keep what they had.
      fr.primitives.forEach((pr: any, i: number) => {
        if (pr.action === 'baked') expect(output.primitives[i].attributes.TANGENT, `${rel} primitive ${i}`).toBeDefined();
      });
    }
  });

  it('per triangle corner, every attribute other than TANGENT equals its decoded input value', async () => {
    for (const rel of files) {
      const input = await read(path.join(samples, rel));
      const output = await read(path.join(tmp, 'a', rel));
      expect(output.primitives.length).toBe(input.primitives.length);
      input.primitives.forEach((p, i) => {
        // Flat normals are generated where the input has none (glTF 2.0, 3.7.2.1).
        const bad = cornerMismatches(p, output.primitives[i], !p.attributes.NORMAL);
        expect(bad, `${rel} primitive ${i}`).toEqual([]);
      });
    }
  });

  it('bakes to identical bytes in a second run with --jobs 2', async () => {
    const r = await runCli(['bake', samples, '-o', path.join(tmp, 'b'), '--all-primitives', '--compression', 'none', '--jobs', '2', '--quiet'], repoRoot);
    expect(r.stderr).toBe('');
    const a = filesUnder(path.join(tmp, 'a')).map((f) => path.relative(path.join(tmp, 'a'), f));
    const b = filesUnder(path.join(tmp, 'b')).map((f) => path.relative(path.join(tmp, 'b'), f));
    expect(b).toEqual(a);
    for (const rel of a) {
      const x = readFileSync(path.join(tmp, 'a', rel));
      const y = readFileSync(path.join(tmp, 'b', rel));
      expect(x.equals(y), rel).toBe(true);
    }
  });
});
