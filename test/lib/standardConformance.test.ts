// Conformance with the standard method on Khronos glTF sample assets whose stored tangents were
// written by exporters using MikkTSpace (the method glTF 2.0 names for generated tangents):
// `tanframe audit --all-primitives` recomputes every primitive and compares corner by corner.
// Samples (licences from the shared datasets' MANIFEST.md):
//   NormalTangentMirrorTest: CC-BY-4.0, (c) 2017-2018 Analytical Graphics, Inc.; mesh and textures by Ed Mackey
//   BarramundiFish: CC0-1.0, Microsoft (2017), CC0 dedication
//   AnisotropyStrengthTest: CC0-1.0, model and textures by Emmett Lalish and Ed Mackey
//   AnisotropyRotationTest: CC-BY-4.0, (c) 2023 Analytical Graphics, Inc.; Ed Mackey
// Bounds: at least 99.9% of compared corners within 0.1 degree and w equal on every corner;
// AnisotropyRotationTest meshes 1-3 were solved by their exporter on source quads split along
// the other diagonal (METHODS.md step 9: nothing in the file recovers that choice), so there
// every corner within 1 degree, w equal on every corner.
import * as fs from 'node:fs';
import * as path from 'node:path';
import { describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';

const repoRoot = path.resolve(__dirname, '../..');
const samples = path.resolve(repoRoot, '../shared/datasets/gltf-samples');
const FILES = [
  'NormalTangentMirrorTest/glTF-Binary/NormalTangentMirrorTest.glb',
  'BarramundiFish/glTF/BarramundiFish.gltf',
  'AnisotropyStrengthTest/glTF-Binary/AnisotropyStrengthTest.glb',
  'AnisotropyRotationTest/glTF-Binary/AnisotropyRotationTest.glb',
].map((f) => path.join(samples, f));
const missing = FILES.filter((f) => !fs.existsSync(f));
if (missing.length > 0) {
  console.warn(`SKIPPED: ${missing.join(', ')} absent (shared datasets not installed); the standard-method conformance test did not run`);
}

/** Primitives solved on quads the file no longer holds: "<file name> m<mesh>". */
const SOURCE_QUADS = new Set(['AnisotropyRotationTest m1', 'AnisotropyRotationTest m2', 'AnisotropyRotationTest m3']);

describe.skipIf(missing.length > 0)('standard-method conformance on Khronos samples with stored tangents', () => {
  it('recomputed frames agree with the stored ones on every primitive', async () => {
    const r = await runCli(['audit', ...FILES, '--all-primitives', '--tolerance', '0.1', '--json', '--jobs', '1'], repoRoot);
    expect(r.code).toBe(0);
    const report = JSON.parse(r.stdout);
    const rows: string[] = [];
    const perFile = new Map<string, number>();
    for (const f of report.files) {
      expect(f.status).toBe('ok');
      const name = path.basename(f.input).replace(/\.(glb|gltf)$/, '');
      for (const p of f.primitives) {
        const s = p.storedTangents;
        if (!s) continue;
        perFile.set(name, (perFile.get(name) ?? 0) + 1);
        const key = `${name} m${p.mesh}`;
        // Every corner is compared: none left out as undefined or invalid.
        expect(s.compared, key).toBe(3 * p.triangles);
        expect(s.undefinedFrames, key).toBe(0);
        expect(s.invalid, key).toBe(0);
        // --tolerance 0.1: mismatched = corners beyond 0.1 degree or with the other w.
        const within = (100 * (s.compared - s.mismatched)) / s.compared;
        rows.push(
          `| ${name} | ${p.mesh} | ${p.primitive} | ${s.compared} | ${s.meanAngleDeg.toFixed(5)} | ${s.p95AngleDeg.toFixed(5)} | ` +
            `${s.maxAngleDeg.toFixed(4)} | ${s.signMismatch} | ${within.toFixed(2)}% |`,
        );
        expect(s.signMismatch, key).toBe(0);
        if (SOURCE_QUADS.has(key)) expect(s.maxAngleDeg, key).toBeLessThanOrEqual(1);
        else expect(within, key).toBeGreaterThanOrEqual(99.9);
      }
    }
    console.log(
      ['standard-method conformance (angles in degrees, over triangle corners):',
        '| sample | mesh | primitive | corners | mean | p95 | max | sign mismatches | within 0.1 deg |',
        '| --- | --- | --- | --- | --- | --- | --- | --- | --- |',
        ...rows].join('\n'),
    );
    // Every primitive with stored tangents took part (AnisotropyStrengthTest's 50th mesh has none).
    expect(Object.fromEntries(perFile)).toEqual({
      NormalTangentMirrorTest: 1, BarramundiFish: 1, AnisotropyStrengthTest: 49, AnisotropyRotationTest: 6,
    });
  });
});
