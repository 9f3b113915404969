// readAssetBytes (DESIGN.md, Library API): an asset read from memory -- a fetched GLB, or a
// .gltf / .obj with the files it names given by URI -- reads exactly as the same files read
// from disk: same JSON, buffers, primitives and warnings, and the same baked bytes.
import * as fs from 'node:fs';
import * as path from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { encodeGltf } from '../../src/io/gltfWrite.js';
import type { Asset } from '../../src/mesh/asset.js';
import { TanframeError } from '../../src/mesh/errors.js';
import { solveAsset } from '../../src/lib/bakeAsset.js';
import { defaultProcessOptions } from '../../src/lib/options.js';
import { outputFormat, readAsset, readAssetBytes } from '../../src/lib/processFile.js';

const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
const demo = path.join(repoRoot, 'examples/harbor-props');

/** Every file of the folder holding `file`, other than itself, by relative URI. */
function folderResources(file: string): Record<string, Uint8Array> {
  const dir = path.dirname(file);
  const out: Record<string, Uint8Array> = {};
  for (const name of fs.readdirSync(dir)) if (name !== path.basename(file)) out[name] = new Uint8Array(fs.readFileSync(path.join(dir, name)));
  return out;
}

/** The asset without where its images were read from (a disk path versus a relative one). */
function comparable(a: Asset) {
  return {
    container: a.container, json: a.json, buffers: a.buffers, primitives: a.primitives, warnings: a.warnings,
    decompressed: a.decompressed, images: a.externalImages.map((i) => ({ image: i.image, uri: i.uri, bytes: i.bytes })),
  };
}

function baked(asset: Asset): Uint8Array[] {
  const solve = solveAsset(asset, defaultProcessOptions());
  return encodeGltf(asset, solve.replacements, { format: outputFormat(asset.container, null), outPath: '/out/asset' }).map((f) => f.bytes);
}

describe('readAssetBytes', () => {
  it('readsEveryDemoFileFromMemoryAsFromDisk', async () => {
    const files = ['barrel/barrel.glb', 'broken/lobster_trap.glb', 'buoy/buoy.glb', 'crate/crate.gltf', 'dock/dock_plank.obj', 'rope/rope_coil.gltf'];
    for (const rel of files) {
      const file = path.join(demo, rel);
      const disk = await readAsset(file);
      // Named as a fetched file would be: a name that exists nowhere on disk.
      const mem = await readAssetBytes(new Uint8Array(fs.readFileSync(file)), `fetched/${path.basename(rel)}`, folderResources(file));
      expect(comparable(mem), rel).toEqual(comparable(disk));
      expect(mem.sourcePath).toBe(`fetched/${path.basename(rel)}`);
      const a = baked(disk), b = baked(mem);
      expect(b.length, rel).toBe(a.length);
      for (let i = 0; i < a.length; i++) expect(Buffer.compare(Buffer.from(b[i]), Buffer.from(a[i])), `${rel} output ${i}`).toBe(0);
    }
  });

  it('findsResourcesByUriOrByPathAndTakesAMap', async () => {
    const file = path.join(demo, 'crate/crate.gltf');
    const res = folderResources(file);
    const disk = comparable(await readAsset(file));
    const asMap = new Map(Object.entries(res).map(([k, v]) => [`./${k}`, v]));
    expect(comparable(await readAssetBytes(new Uint8Array(fs.readFileSync(file)), 'crate.gltf', asMap))).toEqual(disk);
  });

  it('missingBufferFailsAndMissingImageWarnsAsOnDisk', async () => {
    const file = path.join(demo, 'crate/crate.gltf');
    const bytes = new Uint8Array(fs.readFileSync(file));
    const { 'crate.bin': bin, ...images } = folderResources(file);
    expect(bin).toBeDefined();
    await expect(readAssetBytes(bytes, 'crate.gltf', images)).rejects.toMatchObject({ code: 'missing-resource' });
    const noImages = await readAssetBytes(bytes, 'crate.gltf', { 'crate.bin': bin });
    expect(noImages.warnings.some((w) => /crate_normal\.png.*not found/.test(w))).toBe(true);
    expect(noImages.externalImages.every((i) => i.bytes === null)).toBe(true);
  });

  it('refusesUrisThatLeaveTheFolderAsOnDisk', async () => {
    // Source: DESIGN.md, Guarantees -- URIs resolve only inside the asset's folder.
    const gltf = { asset: { version: '2.0' }, buffers: [{ uri: '../secret.bin', byteLength: 4 }] };
    const bytes = new TextEncoder().encode(JSON.stringify(gltf));
    await expect(readAssetBytes(bytes, 'a.gltf', { '../secret.bin': new Uint8Array(4) } as any)).rejects.toMatchObject({ code: 'bad-uri' });
    await expect(readAssetBytes(bytes, 'a.gltf', {})).rejects.toMatchObject({ code: 'bad-uri' });
  });

  it('aGlbNeedsNoResourcesAndBadArgumentsAreContractErrors', async () => {
    const file = path.join(demo, 'buoy/buoy.glb');
    const asset = await readAssetBytes(new Uint8Array(fs.readFileSync(file)), 'buoy.glb');
    expect(asset.primitives.length).toBeGreaterThan(0);
    await expect(readAssetBytes(new Uint8Array(4), 'notes.txt')).rejects.toMatchObject({ code: 'unsupported-format' });
    await expect(readAssetBytes(new Uint8Array(0), 'a.glb')).rejects.toMatchObject({ code: 'empty-file' });
    const err = await readAssetBytes(new Uint8Array(8), 'a.gltf', { 'a.bin': 'text' as any }).catch((e) => e);
    expect(err).toBeInstanceOf(TanframeError);
    expect(err.code).toBe('invalid-argument');
  });
});
