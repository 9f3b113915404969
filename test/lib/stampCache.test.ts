/**
 * The machine-local stamp cache behind a fast rerun: unchanged files are recognised by their
 * metadata (device, inode, size, times) instead of their bytes, stamps that are wrong, too
 * fresh or unreadable are never trusted, and a file changed behind an unchanged size and
 * modification time is still caught (its change time moves).
 */
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { gridAsset, writeGridGlb } from '../helpers/gridAsset.js';
import { STAMP_RACE_COARSE_NS, STAMP_RACE_NS, stampTrusted, type Stamp } from '../../src/lib/stampCache.js';

let tmp = '';
beforeAll(() => {
  tmp = fs.realpathSync(fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-stamps-')));
});
afterAll(() => {
  fs.rmSync(tmp, { recursive: true, force: true });
});

/** A folder with one 2x2 grid GLB whose modification time is a minute old (so its stamp is not racy). */
async function source(name: string): Promise<{ dir: string; glb: string; cache: string }> {
  const dir = path.join(tmp, name, 'src');
  const glb = await writeGridGlb(dir, 'grid', gridAsset(2));
  const past = new Date(Date.now() - 60_000);
  fs.utimesSync(glb, past, past);
  return { dir, glb, cache: path.join(tmp, name, 'cache') };
}

async function bake(dir: string, out: string, cache: string | null): Promise<{ code: number; status: string; stderr: string }> {
  const r = await runCli(['bake', dir, '-o', out, '--json', '--jobs', '1'], tmp, cache ? { TANFRAME_CACHE_DIR: cache } : {});
  const report = JSON.parse(r.stdout);
  return { code: r.code, status: report.files[0].status, stderr: r.stderr };
}

function stampFile(cache: string): string {
  const names = fs.readdirSync(cache).filter((n) => n.startsWith('stamps-'));
  expect(names).toHaveLength(1);
  return path.join(cache, names[0]);
}

describe('stamp cache', () => {
  it('keeps stamps of the input and of the outputs outside the output folder, and a rerun uses them', async () => {
    const { dir, glb, cache } = await source('uses');
    const out = path.join(tmp, 'uses', 'out');
    expect((await bake(dir, out, cache)).status).toBe('ok');
    const file = stampFile(cache);
    const json = JSON.parse(fs.readFileSync(file, 'utf8'));
    const input: Stamp = { ...json.stamps[glb] };
    expect(input.own).toBeUndefined();
    expect(json.stamps[path.join(out, 'grid.glb')].own).toBe(true);
    expect(fs.readdirSync(out).sort()).toEqual(['.tanframe-state.json', 'grid.glb']); // nothing of the cache in the output folder

    expect((await bake(dir, out, cache)).status).toBe('up-to-date');
    // A stamp vouching for other bytes than the record's: the rerun believes the stamp (so it
    // did not read the file) and runs the file again; the bake replaces the wrong stamp.
    json.stamps[glb].sha256 = 'f'.repeat(64);
    fs.writeFileSync(file, JSON.stringify(json));
    expect((await bake(dir, out, cache)).status).toBe('ok');
    expect(JSON.parse(fs.readFileSync(file, 'utf8')).stamps[glb].sha256).toBe(input.sha256);
    expect((await bake(dir, out, cache)).status).toBe('up-to-date');
  });

  it('catches an input rewritten with the same size and modification time (the change time moves)', async () => {
    const { dir, glb, cache } = await source('same-size');
    const out = path.join(tmp, 'same-size', 'out');
    expect((await bake(dir, out, cache)).status).toBe('ok');
    const st = fs.statSync(glb);
    const bytes = fs.readFileSync(glb);
    const at = bytes.indexOf('"name":"grid"');
    expect(at).toBeGreaterThan(0);
    bytes[at + 11] = 0x65; // the mesh is called "grie" now: same size, other bytes, still a valid GLB
    fs.writeFileSync(glb, bytes);
    fs.utimesSync(glb, st.atime, st.mtime);
    expect(fs.statSync(glb).mtimeMs).toBe(st.mtimeMs);
    expect((await bake(dir, out, cache)).status).toBe('ok');
  });

  it('ignores a stamp file that is not JSON, and works without any cache folder', async () => {
    const { dir, cache } = await source('garbage');
    const out = path.join(tmp, 'garbage', 'out');
    expect((await bake(dir, out, cache)).status).toBe('ok');
    fs.writeFileSync(stampFile(cache), '{ not json');
    const r = await bake(dir, out, cache);
    expect(r.status).toBe('up-to-date'); // hashed instead
    expect(r.stderr).toBe('');
    const none = path.join(tmp, 'garbage', 'out2');
    expect((await bake(dir, none, null)).status).toBe('ok');
    expect((await bake(dir, none, null)).status).toBe('up-to-date');
  });

  it('trusts a stamp only when taken long enough after the last modification, or for its own write', () => {
    const base = { dev: '1', ino: '2', size: '3', ctimeNs: '5', sha256: '0'.repeat(64) };
    const mtime = 1_700_000_000_123_456_789n;
    const at = (dt: bigint, m = mtime): Stamp => ({ ...base, mtimeNs: String(m), atNs: String(m + dt) });
    expect(stampTrusted(at(STAMP_RACE_NS - 1n))).toBe(false);
    expect(stampTrusted(at(STAMP_RACE_NS))).toBe(true);
    // Whole-second times (a coarse file system): a longer wait.
    const coarse = 1_700_000_000_000_000_000n;
    expect(stampTrusted(at(STAMP_RACE_NS * 2n, coarse))).toBe(false);
    expect(stampTrusted(at(STAMP_RACE_COARSE_NS, coarse))).toBe(true);
    expect(stampTrusted({ ...at(0n), own: true })).toBe(true);
  });
});
