import * as fs from 'node:fs';
import { mkdtemp, mkdir, readdir, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { fileHolds, outputFromParts, outputLength, outputParts, readInputBytes, writeFilesAtomic, writeHooks } from '../../src/io/files.js';
import { TanframeError } from '../../src/mesh/errors.js';

let root: string;
beforeAll(async () => {
  root = await mkdtemp(path.join(tmpdir(), 'tanframe-files-'));
});
afterAll(async () => {
  await rm(root, { recursive: true, force: true });
});

async function codeOf(p: Promise<unknown>): Promise<string> {
  try {
    await p;
  } catch (err) {
    expect(err).toBeInstanceOf(TanframeError);
    return (err as TanframeError).code;
  }
  return 'no error';
}

describe('writeFilesAtomic', () => {
  it('creates missing folders and writes every file with its exact bytes, leaving no temporary files', async () => {
    const dir = path.join(root, 'a', 'b');
    await writeFilesAtomic([
      { path: path.join(dir, 'x.gltf'), bytes: new TextEncoder().encode('{}') },
      { path: path.join(dir, 'tex', 'y.bin'), bytes: new Uint8Array([1, 2, 3]) },
    ]);
    expect(await readFile(path.join(dir, 'x.gltf'), 'utf8')).toBe('{}');
    expect([...(await readFile(path.join(dir, 'tex', 'y.bin')))]).toEqual([1, 2, 3]);
    expect((await readdir(dir)).sort()).toEqual(['tex', 'x.gltf']);
  });

  it('replaces an existing file', async () => {
    const file = path.join(root, 'replace.bin');
    await writeFile(file, 'old');
    await writeFilesAtomic([{ path: file, bytes: new TextEncoder().encode('new') }]);
    expect(await readFile(file, 'utf8')).toBe('new');
  });

  it('fails with write-failed, removes its temporary files and leaves earlier outputs untouched', async () => {
    const dir = path.join(root, 'fail');
    await mkdir(path.join(dir, 'occupied'), { recursive: true });
    await writeFile(path.join(dir, 'first.bin'), 'before');
    // The second destination is a folder: it cannot be replaced, found after both temps are written.
    const err = writeFilesAtomic([
      { path: path.join(dir, 'first.bin'), bytes: new TextEncoder().encode('after') },
      { path: path.join(dir, 'occupied'), bytes: new Uint8Array([1]) },
    ]);
    await expect(err).rejects.toMatchObject({ code: 'write-failed' });
    await expect(err).rejects.toThrow(/occupied/);
    const left = await readdir(dir);
    expect(left.filter((n) => n.endsWith('.tmp'))).toEqual([]);
    expect(await readFile(path.join(dir, 'first.bin'), 'utf8')).toBe('before');
  });
});

describe('readInputBytes', () => {
  it('reads a file', async () => {
    const file = path.join(root, 'in.bin');
    await writeFile(file, new Uint8Array([9, 8]));
    expect([...(await readInputBytes(file))]).toEqual([9, 8]);
  });

  it('gives read-failed for a missing file or a folder, and empty-file for 0 bytes', async () => {
    expect(await codeOf(readInputBytes(path.join(root, 'nope.glb')))).toBe('read-failed');
    expect(await codeOf(readInputBytes(root))).toBe('read-failed');
    const empty = path.join(root, 'empty.glb');
    await writeFile(empty, '');
    expect(await codeOf(readInputBytes(empty))).toBe('empty-file');
  });
});

describe('writeFilesAtomic replacing an asset of several files', () => {
  const enc = (s: string) => new TextEncoder().encode(s);

  it('renames the main file last, removes what only the old asset named after it, and keeps modes', async () => {
    const dir = path.join(root, 'asset');
    await mkdir(dir, { recursive: true });
    const main = path.join(dir, 'a.gltf');
    await writeFile(main, 'old json');
    await writeFile(path.join(dir, 'a.1111111111111111.bin'), 'old bin');
    fs.chmodSync(main, 0o640);
    const seen: string[][] = [];
    writeHooks.beforeMainRename = async () => {
      // The new buffer is in place, the old JSON still names the old one, both still there.
      seen.push((await readdir(dir)).filter((n) => !n.endsWith('.tmp')).sort());
      expect(await readFile(main, 'utf8')).toBe('old json');
    };
    try {
      await writeFilesAtomic(
        [{ path: main, bytes: enc('new json') }, { path: path.join(dir, 'a.2222222222222222.bin'), bytes: enc('new bin') }],
        { main, leftovers: { match: (n) => /^a\.[0-9a-f]{16}\.bin$/.test(n), keep: [] } },
      );
    } finally {
      writeHooks.beforeMainRename = undefined;
    }
    expect(seen).toEqual([['a.1111111111111111.bin', 'a.2222222222222222.bin', 'a.gltf']]);
    expect((await readdir(dir)).sort()).toEqual(['a.2222222222222222.bin', 'a.gltf']);
    expect(await readFile(main, 'utf8')).toBe('new json');
    expect(fs.statSync(main).mode & 0o777).toBe(0o640);
    // A new file beside a replaced main file takes the main file's mode.
    expect(fs.statSync(path.join(dir, 'a.2222222222222222.bin')).mode & 0o777).toBe(0o640);
  });

  it('leaves a file whose bytes are already there alone (mtime kept), and removes nothing when the main file is not written', async () => {
    const dir = path.join(root, 'same');
    await mkdir(dir, { recursive: true });
    const main = path.join(dir, 'a.gltf');
    await writeFile(main, 'json');
    await writeFile(path.join(dir, 'a.bin'), 'bin');
    const past = new Date('2020-01-01T00:00:00Z');
    fs.utimesSync(main, past, past);
    await writeFilesAtomic([{ path: main, bytes: enc('json') }]);
    expect(fs.statSync(main).mtime.getTime()).toBe(past.getTime());
    // An empty write (nothing to write for this asset) never removes anything.
    await writeFilesAtomic([], { main, removeAfter: [path.join(dir, 'a.bin')] });
    expect((await readdir(dir)).sort()).toEqual(['a.bin', 'a.gltf']);
  });
});

describe('outputs made of parts', () => {
  /** Parts of assorted sizes, empty ones among them, more than one writev call takes. */
  function manyParts(): Uint8Array[] {
    const parts: Uint8Array[] = [];
    for (let i = 0; i < 2500; i++) parts.push(Uint8Array.from({ length: i % 7 === 0 ? 0 : (i * 37) % 300 }, (_, k) => (i * 13 + k) & 0xff));
    parts.push(Uint8Array.from({ length: 3 << 20 }, (_, k) => (k * 7) & 0xff)); // past one compare chunk
    return parts;
  }
  const joined = (parts: Uint8Array[]) => Buffer.concat(parts.map((p) => Buffer.from(p.buffer, p.byteOffset, p.byteLength)));

  it('are written as their parts one after another, and their bytes join them only when read', async () => {
    const parts = manyParts();
    const file = path.join(root, 'parts', 'out.bin');
    const out = outputFromParts(file, parts);
    expect(outputLength(out)).toBe(joined(parts).byteLength);
    expect(outputParts(out).every((p) => p.byteLength > 0)).toBe(true);
    await writeFilesAtomic([out]);
    expect(Buffer.compare(await readFile(file), joined(parts))).toBe(0);
    expect(Buffer.compare(Buffer.from(out.bytes), joined(parts))).toBe(0);
    expect((await readdir(path.dirname(file))).sort()).toEqual(['out.bin']);
  });

  it('are compared with the file on disk chunk by chunk: equal content is left alone, any other is replaced', async () => {
    const parts = manyParts();
    const file = path.join(root, 'parts', 'same.bin');
    await writeFile(file, joined(parts));
    const length = joined(parts).byteLength;
    expect(await fileHolds(file, parts, length)).toBe(true);
    const changed = parts.map((p) => p.slice());
    changed[changed.length - 1][(2 << 20) + 5] ^= 1;
    expect(await fileHolds(file, changed, length)).toBe(false);
    expect(await fileHolds(file, parts.slice(0, -1), length - (3 << 20))).toBe(false);
    expect(await fileHolds(path.join(root, 'parts', 'absent.bin'), parts, length)).toBe(false);
    const old = new Date(2001, 1, 1);
    fs.utimesSync(file, old, old);
    await writeFilesAtomic([outputFromParts(file, parts)]);
    expect(fs.statSync(file).mtimeMs).toBe(old.getTime());
    await writeFilesAtomic([outputFromParts(file, changed)]);
    expect(fs.statSync(file).mtimeMs).not.toBe(old.getTime());
    expect(Buffer.compare(await readFile(file), joined(changed))).toBe(0);
  });
});

describe('writeFilesAtomic told to stop', () => {
  it('renames nothing into place, removes its temporary files and fails with timeout', async () => {
    const dir = path.join(root, 'stopped');
    await mkdir(dir, { recursive: true });
    await writeFile(path.join(dir, 'old.glb'), 'old');
    let asked = 0;
    const code = await codeOf(writeFilesAtomic([
      { path: path.join(dir, 'old.glb'), bytes: new Uint8Array([1, 2, 3]) },
      { path: path.join(dir, 'new.bin'), bytes: new Uint8Array([4]) },
    ], { main: path.join(dir, 'old.glb'), stopped: () => ++asked > 1 }));
    expect(code).toBe('timeout');
    expect(asked).toBeGreaterThan(1);
    expect(await readFile(path.join(dir, 'old.glb'), 'utf8')).toBe('old');
    expect(await readdir(dir)).toEqual(['old.glb']);
  });
});
