import { describe, expect, it } from 'vitest';
import { readGltfBytes } from '../../src/io/gltfRead.js';
import { encodeGltf } from '../../src/io/gltfWrite.js';
import { TanframeError } from '../../src/mesh/errors.js';
import { buildGltf, glbBytes, type BuildPrimitive } from '../helpers/gltfBuilder.js';

// Deterministic mutation testing: whatever a damaged file contains, reading (and re-encoding
// what was read) either works or fails with a TanframeError carrying a one-line message;
// never a TypeError, RangeError or a hang.

/** mulberry32: a small seeded PRNG (common practice), so every run tries the same inputs. */
function rng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

// A quad (two triangles) with a sparse attribute and a morph target:
//   3 ---- 2
//   |    / |
//   0 ---- 1
function sample(): { json: any; bin: Uint8Array } {
  const prim: BuildPrimitive = {
    attributes: {
      POSITION: { array: new Float32Array([0, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0]), type: 'VEC3' },
      NORMAL: { array: new Float32Array([0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1]), type: 'VEC3' },
      TEXCOORD_0: { array: new Uint16Array([0, 65535, 65535, 65535, 65535, 0, 0, 0]), type: 'VEC2', normalized: true },
      _S: { array: new Float32Array(4), type: 'SCALAR', noBufferView: true, sparse: { indices: [1, 2], values: new Float32Array([5, 6]) } },
    },
    indices: new Uint16Array([0, 1, 2, 0, 2, 3]),
    targets: [{ POSITION: { array: new Float32Array(12), type: 'VEC3' } }],
  };
  return buildGltf([prim], { interleaved: true });
}

/** Reads `bytes`; when that works, also encodes the result. Returns the failure code or 'ok'. */
async function attempt(bytes: Uint8Array, name: string): Promise<string> {
  try {
    const asset = await readGltfBytes(bytes, name);
    encodeGltf(asset, new Map(), { format: 'glb', outPath: 'out.glb' });
    return 'ok';
  } catch (err) {
    if (!(err instanceof TanframeError)) throw err;
    expect(err.message).not.toMatch(/\n/);
    expect(err.message.length).toBeGreaterThan(0);
    return err.code;
  }
}

const WEIRD: unknown[] = [-1, 0, 1, 3.5, 2 ** 32, 1e300, Number.MAX_SAFE_INTEGER, 'x', '', '5126', 'constructor', null, true, {}, [], [0], { a: 1 }];

/** Every (holder, key) slot in a JSON tree. */
function slots(json: any): [any, string | number][] {
  const out: [any, string | number][] = [];
  const stack = [json];
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

describe('damaged files never crash the reader or the writer', () => {
  it('random byte changes and truncations of a GLB', async () => {
    const { json, bin } = sample();
    const good = glbBytes(json, bin);
    expect(await attempt(good, 'x.glb')).toBe('ok');
    const rand = rng(1234);
    const codes = new Set<string>();
    for (let i = 0; i < 400; i++) {
      const b = good.slice();
      const edits = 1 + Math.floor(rand() * 4);
      for (let e = 0; e < edits; e++) b[Math.floor(rand() * b.length)] = Math.floor(rand() * 256);
      codes.add(await attempt(i % 5 === 0 ? b.subarray(0, Math.floor(rand() * b.length)) : b, 'x.glb'));
    }
    // the mutations reach several layers (container, JSON, accessors)
    expect(codes.size).toBeGreaterThan(3);
  });

  it('random JSON values put in random places', async () => {
    const { json, bin } = sample();
    const rand = rng(99);
    const codes = new Set<string>();
    for (let i = 0; i < 600; i++) {
      const copy = structuredClone(json);
      const all = slots(copy);
      const [holder, key] = all[Math.floor(rand() * all.length)];
      holder[key] = structuredClone(WEIRD[Math.floor(rand() * WEIRD.length)]);
      codes.add(await attempt(glbBytes(copy, bin), 'x.glb'));
    }
    expect(codes.has('bad-accessor')).toBe(true);
    expect(codes.has('bad-gltf')).toBe(true);
  });

  it('deeply nested JSON is refused before it can exhaust the stack', async () => {
    const text = `{"asset":{"version":"2.0"},"extras":${'['.repeat(100000)}${']'.repeat(100000)}}`;
    expect(await attempt(new TextEncoder().encode(text), 'deep.gltf')).toBe('bad-json');
  });
});
