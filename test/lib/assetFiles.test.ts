/**
 * The files an asset references (what the state hashes and a byte copy carries along):
 * external buffers and images of a .gltf, images a GLB names by URI, an OBJ's material
 * libraries and their images; data: URIs are part of the file itself.
 */
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { referencedFiles } from '../../src/lib/assetFiles.js';
import { readAsset } from '../../src/lib/processFile.js';
import { buildGltf, glbBytes, writeGltf, type BuildPrimitive } from '../helpers/gltfBuilder.js';

let tmp = '';
beforeAll(() => {
  tmp = fs.realpathSync(fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-assetfiles-')));
});
afterAll(() => {
  fs.rmSync(tmp, { recursive: true, force: true });
});

// One triangle:
//   2
//   | \
//   0 - 1
function triangle(): { json: any; bin: Uint8Array } {
  const prim: BuildPrimitive = {
    attributes: {
      POSITION: { array: new Float32Array([0, 0, 0, 1, 0, 0, 0, 1, 0]), type: 'VEC3' },
      TEXCOORD_0: { array: new Float32Array([0, 1, 1, 1, 0, 0]), type: 'VEC2' },
    },
    indices: new Uint16Array([0, 1, 2]),
    material: 0,
  };
  return buildGltf([prim]);
}

const PNG = new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 1]);

describe('referencedFiles', () => {
  it('lists a .gltf\'s external buffer and its images, found or not, relative to its folder', async () => {
    const dir = path.join(tmp, 'gltf');
    const { json, bin } = triangle();
    json.textures = [{ source: 0 }, { source: 1 }];
    json.images = [{ uri: 'maps/n%20a.png' }, { uri: 'maps/missing.png' }];
    json.materials[0].normalTexture = { index: 0 };
    json.materials[0].occlusionTexture = { index: 1 };
    const file = await writeGltf(dir, 'tri', json, bin);
    fs.mkdirSync(path.join(dir, 'maps'), { recursive: true });
    fs.writeFileSync(path.join(dir, 'maps', 'n a.png'), PNG);
    const refs = referencedFiles(await readAsset(file), file);
    expect(refs.map((r) => [r.kind, r.relative])).toEqual([['buffer', 'tri.bin'], ['image', 'maps/n a.png'], ['image', 'maps/missing.png']]);
    expect(refs[1].path).toBe(path.join(dir, 'maps', 'n a.png'));
  });

  it('lists nothing for data: buffers and images embedded in a GLB', async () => {
    const dir = path.join(tmp, 'embedded');
    const { json, bin } = triangle();
    const file = await writeGltf(dir, 'tri', json, bin, true);
    expect(referencedFiles(await readAsset(file), file)).toEqual([]);
    const glb = path.join(dir, 'tri.glb');
    fs.writeFileSync(glb, glbBytes(triangle().json, bin));
    expect(referencedFiles(await readAsset(glb), glb)).toEqual([]);
  });

  it('lists an OBJ\'s material library (also a missing one) and the images it names', async () => {
    const dir = path.join(tmp, 'obj');
    fs.mkdirSync(dir, { recursive: true });
    fs.writeFileSync(path.join(dir, 'tri.obj'), 'mtllib tri.mtl\nmtllib gone.mtl\nv 0 0 0\nv 1 0 0\nv 0 1 0\nvt 0 0\nvt 1 0\nvt 0 1\nusemtl m\nf 1/1 2/2 3/3\n');
    fs.writeFileSync(path.join(dir, 'tri.mtl'), 'newmtl m\nmap_Kd colour.png\n');
    fs.writeFileSync(path.join(dir, 'colour.png'), PNG);
    const file = path.join(dir, 'tri.obj');
    const refs = referencedFiles(await readAsset(file), file);
    expect(refs.map((r) => [r.kind, r.relative])).toEqual([['image', 'colour.png'], ['material-library', 'tri.mtl'], ['material-library', 'gone.mtl']]);
  });
});
