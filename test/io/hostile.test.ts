/**
 * Reader behaviour on hostile input, one test per fault found while hardening the readers
 * (fixture corpus and fuzzing), plus the size limits checked before decoding.
 */
import { spawnSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { readInputBytes } from '../../src/io/files.js';
import { readGltf, readGltfBytes } from '../../src/io/gltfRead.js';
import { DEFAULT_MAX_TRIANGLES, TRIANGLE_ALLOWANCE, TRIANGLES_PER_INPUT_BYTE, checkTriangleLimit } from '../../src/io/limits.js';
import { readObj } from '../../src/io/objRead.js';
import { isInside } from '../../src/io/uri.js';
import { TanframeError } from '../../src/mesh/errors.js';
import { defaultProcessOptions } from '../../src/lib/options.js';
import { processFile } from '../../src/lib/processFile.js';
import { buildGltf, glbBytes, writeGltf, type BuildPrimitive } from '../helpers/gltfBuilder.js';

const root = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-hostile-'));
let counter = 0;
afterAll(() => fs.rmSync(root, { recursive: true, force: true }));

function writeObj(text: string): string {
  const dir = path.join(root, `obj${counter++}`);
  fs.mkdirSync(dir, { recursive: true });
  const file = path.join(dir, 'model.obj');
  fs.writeFileSync(file, text);
  return file;
}

/** The TanframeError `p` rejects with (fails when it resolves or throws something else). */
async function refusal(p: Promise<unknown>): Promise<TanframeError> {
  try {
    await p;
  } catch (err) {
    expect(err).toBeInstanceOf(TanframeError);
    return err as TanframeError;
  }
  throw new Error('expected a refusal');
}

// A quad, two triangles:
//   3 ---- 2
//   |    / |
//   0 ---- 1
function quad(): BuildPrimitive {
  return {
    attributes: {
      POSITION: { array: new Float32Array([0, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0]), type: 'VEC3' },
      TEXCOORD_0: { array: new Float32Array([0, 1, 1, 1, 1, 0, 0, 0]), type: 'VEC2' },
    },
    indices: new Uint16Array([0, 1, 2, 0, 2, 3]),
  };
}

const OBJ_QUAD = 'v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\n';

describe('OBJ face indices beyond int32', () => {
  // Found by the fixture corpus: 99999999999999999999999 was converted to int32 when stored
  // and wrapped around to a small index, so the face read as a valid one.
  it('refuses an index too large for any vertex instead of wrapping it', async () => {
    const e = await refusal(readObj(writeObj(`${OBJ_QUAD}f 1 2 99999999999999999999999\n`)));
    expect(e.code).toBe('bad-obj');
    expect(e.message).toMatch(/line 5: vertex index .* out of range/);
  });

  it('refuses 2^32 + 1, which wraps to 1 in 32 bits', async () => {
    const e = await refusal(readObj(writeObj(`${OBJ_QUAD}f 1 2 4294967297\n`)));
    expect(e.code).toBe('bad-obj');
  });

  it('refuses a hugely negative relative index', async () => {
    const e = await refusal(readObj(writeObj(`${OBJ_QUAD}f 1 2 -4294967295\n`)));
    expect(e.code).toBe('bad-obj');
  });

  it('keeps the message short when the offending token is megabytes long', async () => {
    const e = await refusal(readObj(writeObj(`${OBJ_QUAD}f 1 2 3x${'9'.repeat(1_000_000)}\n`)));
    expect(e.code).toBe('bad-obj');
    expect(e.message.length).toBeLessThan(200);
    expect(e.message).not.toMatch(/\n/);
  });
});

describe('accessors with count 0', () => {
  it('read as an empty primitive instead of failing the file', async () => {
    // glTF 2.0 specification, accessor.count: minimum 1; exporters still write 0 for empty
    // meshes, and the file's other meshes must not be lost because of it.
    const { json, bin } = buildGltf([quad()]);
    json.accessors[json.meshes[0].primitives[0].indices].count = 0;
    const asset = await readGltfBytes(glbBytes(json, bin), 'x.glb');
    expect(asset.primitives[0].indices!.length).toBe(0);
  });

  it('still refuses indices that point past the vertices of an empty attribute', async () => {
    const { json, bin } = buildGltf([quad()]);
    for (const a of json.accessors) if (a.type !== 'SCALAR') a.count = 0;
    delete json.accessors[0].min;
    delete json.accessors[0].max;
    expect((await refusal(readGltfBytes(glbBytes(json, bin), 'x.glb'))).code).toBe('bad-index');
  });
});

describe('URIs whose names start with two dots', () => {
  // Found while writing the fixture corpus: "..data.bin" is an ordinary name inside the
  // folder, but the containment check took any relative path starting with ".." as an escape.
  it('isInside tells a name starting with .. from a parent folder', () => {
    expect(isInside('/a/b', '/a/b/..data.bin')).toBe(true);
    expect(isInside('/a/b', '/a/b/c/..')).toBe(true);
    expect(isInside('/a/b', '/a')).toBe(false);
    expect(isInside('/a/b', '/a/bc')).toBe(false);
  });

  it('reads a buffer file named ..data.bin', async () => {
    const { json, bin } = buildGltf([quad()]);
    const dir = path.join(root, `dots${counter++}`);
    const file = await writeGltf(dir, 'x', json, bin);
    fs.renameSync(path.join(dir, 'x.bin'), path.join(dir, '..data.bin'));
    const text = JSON.parse(fs.readFileSync(file, 'utf8'));
    text.buffers[0].uri = '..data.bin';
    fs.writeFileSync(file, JSON.stringify(text));
    const asset = await readGltfBytes(new Uint8Array(fs.readFileSync(file)), file);
    expect(asset.primitives[0].indices!.length).toBe(6);
  });
});

describe('triangle limits, checked before decoding', () => {
  it('refuses a glTF holding more triangles than maxTriangles', async () => {
    const { json, bin } = buildGltf([quad()]);
    const e = await refusal(readGltfBytes(glbBytes(json, bin), 'x.glb', { maxTriangles: 1 }));
    expect(e.code).toBe('too-large');
    expect(e.message).toMatch(/2 triangles, more than the limit of 1/);
    await expect(readGltfBytes(glbBytes(json, bin), 'x.glb', { maxTriangles: 2 })).resolves.toBeDefined();
  });

  it('counts strips and fans by their own rule', async () => {
    // Source: glTF 2.0 specification, 3.7.2.1: a strip or fan of n indices holds n - 2 triangles.
    const p = quad();
    p.indices = new Uint16Array([0, 1, 3, 2]);
    p.mode = 5;
    const { json, bin } = buildGltf([p]);
    await expect(readGltfBytes(glbBytes(json, bin), 'x.glb', { maxTriangles: 2 })).resolves.toBeDefined();
    expect((await refusal(readGltfBytes(glbBytes(json, bin), 'x.glb', { maxTriangles: 1 }))).code).toBe('too-large');
  });

  it('refuses an OBJ whose faces hold more triangles than maxTriangles', async () => {
    const file = writeObj(`${OBJ_QUAD}f 1 2 3 4\n`);
    const e = await refusal(readObj(file, { maxTriangles: 1 }));
    expect(e.code).toBe('too-large');
    await expect(readObj(file, { maxTriangles: 2 })).resolves.toBeDefined();
  });

  it('refuses a tiny file whose triangles could only come from expanding zeros', async () => {
    // A non-indexed POSITION accessor without a buffer view reads as zeros; ~3 million of
    // them from a few hundred bytes would decode within the byte budget (37 MB) but make
    // a million triangles to solve.
    const vertices = 3 * (TRIANGLE_ALLOWANCE + 50_000);
    const json = {
      asset: { version: '2.0' },
      accessors: [{ componentType: 5126, count: vertices, type: 'VEC3' }],
      meshes: [{ primitives: [{ attributes: { POSITION: 0 } }] }],
    };
    const bytes = new TextEncoder().encode(JSON.stringify(json));
    const e = await refusal(readGltfBytes(bytes, 'zeros.gltf'));
    expect(e.code).toBe('too-large');
    expect(e.message).toMatch(/holds only \d+ bytes/);
  });

  it('the decode budget refuses an expansion no triangle count reveals (points), before allocating', async () => {
    // A POINTS primitive holds no triangles, so only the byte budget stands between a
    // 200-byte file and 3 GiB of zeros (2^28 VEC3 floats).
    const json = {
      asset: { version: '2.0' },
      accessors: [{ componentType: 5126, count: 2 ** 28, type: 'VEC3' }],
      meshes: [{ primitives: [{ attributes: { POSITION: 0 }, mode: 0 }] }],
    };
    const e = await refusal(readGltfBytes(new TextEncoder().encode(JSON.stringify(json)), 'points.gltf'));
    expect(e.code).toBe('too-large');
    expect(e.message).toMatch(/MiB/);
  });

  it('checkTriangleLimit: the default cap and the per-byte allowance', () => {
    expect(() => checkTriangleLimit(DEFAULT_MAX_TRIANGLES, 1e12)).not.toThrow();
    expect(() => checkTriangleLimit(DEFAULT_MAX_TRIANGLES + 1, 1e12)).toThrow(/--max-triangles/);
    expect(() => checkTriangleLimit(TRIANGLE_ALLOWANCE, 0)).not.toThrow();
    expect(() => checkTriangleLimit(TRIANGLE_ALLOWANCE + 1, 0)).toThrow(TanframeError);
    expect(() => checkTriangleLimit(TRIANGLE_ALLOWANCE + TRIANGLES_PER_INPUT_BYTE * 100, 100)).not.toThrow();
    expect(() => checkTriangleLimit(TRIANGLE_ALLOWANCE + TRIANGLES_PER_INPUT_BYTE * 100 + 1, 100)).toThrow(TanframeError);
  });
});

/** Makes a named pipe at `p`; false where mkfifo is not available. */
function mkfifo(p: string): boolean {
  const r = spawnSync('mkfifo', [p]);
  return r.status === 0;
}
const fifoProbe = path.join(root, 'probe.fifo');
const haveFifo = mkfifo(fifoProbe);
if (!haveFifo) console.warn('SKIPPED: named-pipe tests (mkfifo not available)');

describe.skipIf(!haveFifo)('pipes and devices are never read', () => {
  // Found by review: a named pipe named like a mesh (or like its .bin) made the read wait
  // forever for a writer, hanging a single-file run; /dev/zero behind a link would feed
  // zeros until memory ran out. Both are refused before a byte is read.
  it('refuses an input that is a named pipe, at once', async () => {
    const dir = path.join(root, `fifo${counter++}`);
    fs.mkdirSync(dir);
    for (const name of ['a.glb', 'b.gltf', 'c.obj']) {
      const p = path.join(dir, name);
      expect(mkfifo(p)).toBe(true);
      const e = await refusal(name === 'c.obj' ? readObj(p) : readGltf(p));
      expect(e.code).toBe('read-failed');
      expect(e.message).toMatch(/not a regular file/);
    }
  });

  it('refuses a device reached through a link named like a mesh', async () => {
    const dir = path.join(root, `dev${counter++}`);
    fs.mkdirSync(dir);
    fs.symlinkSync('/dev/zero', path.join(dir, 'zero.glb'));
    const e = await refusal(readInputBytes(path.join(dir, 'zero.glb')));
    expect(e.code).toBe('read-failed');
  });

  it('refuses a .bin that is a named pipe', async () => {
    const { json, bin } = buildGltf([quad()]);
    const dir = path.join(root, `fifobin${counter++}`);
    const file = await writeGltf(dir, 'x', json, bin);
    fs.rmSync(path.join(dir, 'x.bin'));
    expect(mkfifo(path.join(dir, 'x.bin'))).toBe(true);
    const e = await refusal(readGltf(file));
    expect(e.code).toBe('read-failed');
    expect(e.message).toMatch(/not a regular file/);
  });

  it('an OBJ whose material library and texture are pipes reads with warnings', async () => {
    const file = writeObj(`mtllib lib.mtl\nusemtl m\n${OBJ_QUAD}f 1 2 3 4\n`);
    const dir = path.dirname(file);
    expect(mkfifo(path.join(dir, 'lib.mtl'))).toBe(true);
    const a = await readObj(file);
    expect(a.warnings.join('\n')).toMatch(/lib\.mtl.*not a regular file/);
    fs.rmSync(path.join(dir, 'lib.mtl'));
    fs.writeFileSync(path.join(dir, 'lib.mtl'), 'newmtl m\nnorm n.png\n');
    expect(mkfifo(path.join(dir, 'n.png'))).toBe(true);
    const b = await readObj(file);
    expect(b.warnings.join('\n')).toMatch(/n\.png.*not a regular file/);
  });
});


describe('many warnings', () => {
  it('an MTL line of 200,000 unknown options gives 100 warnings and a closing count, not a stack overflow', async () => {
    const dir = path.join(root, 'many-warnings');
    fs.mkdirSync(dir);
    fs.writeFileSync(path.join(dir, 'a.obj'), 'mtllib a.mtl\nv 0 0 0\nv 1 0 0\nv 0 1 0\nvt 0 0\nvt 1 0\nvt 0 1\nusemtl m\nf 1/1 2/2 3/3\n');
    fs.writeFileSync(path.join(dir, 'a.mtl'), `newmtl m\nmap_Kd ${'-x '.repeat(200_000)}a.png\n`);
    const r = await processFile(
      { command: 'audit', input: path.join(dir, 'a.obj'), output: null, format: null, dryRun: true, displayInput: 'a.obj', displayOutput: null },
      defaultProcessOptions(),
    );
    expect(r.status, r.error?.message).toBe('ok');
    expect(r.warnings).toHaveLength(101);
    expect(r.warnings[0]).toBe("a.mtl line 2: unknown texture option '-x' skipped");
    // 200,000 unknown options and the missing image a.png: 200,001 warnings, 100 listed.
    expect(r.warnings[100]).toBe('199,901 more warnings not listed (200,001 in all)');
  });
});

describe.skipIf(process.platform !== 'linux')('kernel pseudo-files are never read', () => {
  // Found by review (issue 11): /proc/self/pagemap reports size 0 but reads as hundreds of
  // gigabytes; behind a link named like a mesh it was read until memory ran out. Files of
  // /proc and /sys are refused before a byte is read.
  it('refuses inputs linked to /proc and /sys files', async () => {
    const dir = path.join(root, `proc${counter++}`);
    fs.mkdirSync(dir);
    fs.symlinkSync('/proc/self/pagemap', path.join(dir, 'pagemap.glb'));
    fs.symlinkSync('/proc/self/status', path.join(dir, 'status.gltf'));
    for (const name of ['pagemap.glb', 'status.gltf']) {
      const e = await refusal(readInputBytes(path.join(dir, name)));
      expect(e.code).toBe('read-failed');
      expect(e.message).toMatch(/not a regular file/);
    }
    const sys = fs.readdirSync('/sys/kernel').map((n) => path.join('/sys/kernel', n)).find((p) => fs.statSync(p, { throwIfNoEntry: false })?.isFile());
    if (sys) {
      fs.symlinkSync(sys, path.join(dir, 'sys.obj'));
      expect((await refusal(readInputBytes(path.join(dir, 'sys.obj')))).code).toBe('read-failed');
    }
  });
});

describe('JSON errors and budget', () => {
  // Found by review (issue 11): a JSON parse error quoted the text around the fault (any
  // bytes, terminal escapes included) into the message.
  it('a JSON parse error names the position and never quotes the text', async () => {
    const dir = path.join(root, `json${counter++}`);
    fs.mkdirSync(dir);
    for (const text of ['{"asset": \u001b]0;owned\u0007}', '{"asset": {"version": "2.0"} x}', 'SECRET-BYTES']) {
      const file = path.join(dir, 'a.gltf');
      fs.writeFileSync(file, text);
      const e = await refusal(readGltf(file));
      expect(e.code).toBe('bad-json');
      expect(e.message).not.toMatch(/\u001b|\u0007|owned|SECRET|"/);
      const glb = path.join(dir, 'a.glb');
      fs.writeFileSync(glb, glbBytesOfText(text));
      const g = await refusal(readGltf(glb));
      expect(g.code).toBe('bad-json');
      expect(g.message).not.toMatch(/\u001b|\u0007|owned|SECRET|"/);
    }
  });

  it('text of many tiny values is refused with too-large before it is parsed; glTF-like density passes', async () => {
    // [{},{},...]: 3 bytes per object, about 19 times its size once parsed (see jsonBudget.ts).
    const dense = new TextEncoder().encode(`{"asset":{"version":"2.0"},"extras":[${'{},'.repeat(4_000_000)}{}]}`);
    const e = await refusal(readGltfBytes(dense, 'dense.gltf'));
    expect(e.code).toBe('too-large');
    expect(e.message).toMatch(/values in \d+ bytes/);
    // The same size of nodes written the way exporters do ({"mesh":0} and a name) reads.
    const nodes = `{"asset":{"version":"2.0"},"nodes":[${'{"name":"crate","mesh":0},'.repeat(500_000)}{}]}`;
    const asset = await readGltfBytes(new TextEncoder().encode(nodes), 'nodes.gltf');
    expect(asset.json.nodes).toHaveLength(500_001);
  });

  it('nesting deeper than 512 levels is refused from the bytes (also inside a GLB)', async () => {
    const deep = `{"asset":{"version":"2.0"},"extras":${'['.repeat(600)}${']'.repeat(600)}}`;
    expect((await refusal(readGltfBytes(new TextEncoder().encode(deep), 'deep.gltf'))).message).toMatch(/nests deeper than 512/);
    expect((await refusal(readGltfBytes(glbBytesOfText(deep), 'deep.glb'))).code).toBe('bad-json');
    // Brackets inside strings do not count.
    const quoted = `{"asset":{"version":"2.0"},"extras":"${'['.repeat(600)}"}`;
    expect((await readGltfBytes(new TextEncoder().encode(quoted), 'q.gltf')).json.extras).toHaveLength(600);
  });
});

/** A GLB holding `text` as its JSON chunk (glTF 2.0 specification, 4.4: header, JSON chunk padded with spaces). */
function glbBytesOfText(text: string): Uint8Array {
  const t = new TextEncoder().encode(text);
  const len = (t.length + 3) & ~3;
  const out = new Uint8Array(20 + len).fill(0x20, 20);
  const dv = new DataView(out.buffer);
  dv.setUint32(0, 0x46546c67, true);
  dv.setUint32(4, 2, true);
  dv.setUint32(8, out.length, true);
  dv.setUint32(12, len, true);
  dv.setUint32(16, 0x4e4f534a, true);
  out.set(t, 20);
  return out;
}

describe.skipIf(!haveFifo)('planning reads references as safely as the readers', () => {
  // Found while merging the write plan (issue 11): listing an input's references opened a
  // named pipe without O_NONBLOCK (waiting for a writer) and parsed JSON without the budget.
  it('a pipe named like a GLB and JSON past the budget give no references, at once', async () => {
    const { listAssetReferences } = await import('../../src/io/assetRefs.js');
    const dir = path.join(root, `plan${counter++}`);
    fs.mkdirSync(dir);
    expect(mkfifo(path.join(dir, 'a.glb'))).toBe(true);
    expect(await listAssetReferences(path.join(dir, 'a.glb'))).toBeNull();
    fs.writeFileSync(path.join(dir, 'dense.gltf'), `{"asset":{"version":"2.0"},"extras":[${'{},'.repeat(4_000_000)}{}]}`);
    expect(await listAssetReferences(path.join(dir, 'dense.gltf'))).toBeNull();
  });
});
