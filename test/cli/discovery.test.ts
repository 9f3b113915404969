/**
 * Discovery through the command line: a bake whose -o lies inside its input folder never
 * re-bakes its own outputs, --exclude (repeatable) leaves inputs out of bake and audit, and
 * brace globs with `**` alternatives run instead of failing.
 */
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { gridAsset, writeGridGlb } from '../helpers/gridAsset.js';

let tmp = '';
beforeAll(() => {
  tmp = fs.realpathSync(fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-discovery-')));
});
afterAll(() => {
  fs.rmSync(tmp, { recursive: true, force: true });
});

/** Every file under `dir`, relative, sorted. */
function listed(dir: string): string[] {
  const out: string[] = [];
  const walk = (d: string) => {
    for (const e of fs.readdirSync(d, { withFileTypes: true })) {
      const p = path.join(d, e.name);
      if (e.isDirectory()) walk(p);
      else out.push(path.relative(dir, p).split(path.sep).join('/'));
    }
  };
  walk(dir);
  return out.sort();
}

/** A folder of 1 x 1 normal-mapped grids (two triangles each) at the given relative names. */
async function grids(name: string, files: string[]): Promise<string> {
  const root = path.join(tmp, name);
  for (const f of files) await writeGridGlb(path.join(root, path.dirname(f)), path.basename(f, '.glb'), gridAsset(1));
  return root;
}

describe('bake into a folder inside its input folder', () => {
  it('never re-bakes its own outputs, however often it runs', async () => {
    const nest = await grids('nest', ['a.glb', 'sub/b.glb']);
    for (let run = 0; run < 2; run++) {
      const r = await runCli(['bake', 'nest', '-o', 'nest/baked', '--json', '--jobs', '1', '--file-timeout', '0'], tmp);
      expect(r.code, r.stderr).toBe(0);
      const report = JSON.parse(r.stdout);
      expect(report.files.map((f: any) => f.input).sort()).toEqual(['nest/a.glb', 'nest/sub/b.glb']);
    }
    expect(listed(nest).filter((f) => f.endsWith('.glb'))).toEqual(['a.glb', 'baked/a.glb', 'baked/sub/b.glb', 'sub/b.glb']);
  });
});

describe('--exclude', () => {
  it('leaves matching files out of a bake, and may be given more than once', async () => {
    await grids('ex-bake', ['keep.glb', 'wip/draft.glb', 'third_party/lib.glb']);
    const out = path.join(tmp, 'ex-bake-out');
    const r = await runCli(['bake', 'ex-bake', '-o', out, '--exclude', 'wip', '--exclude', 'ex-bake/third_party/**', '--json', '--jobs', '1', '--file-timeout', '0'], tmp);
    expect(r.code, r.stderr).toBe(0);
    expect(JSON.parse(r.stdout).files.map((f: any) => f.input)).toEqual(['ex-bake/keep.glb']);
    expect(listed(out).filter((f) => f.endsWith('.glb'))).toEqual(['keep.glb']);
  });

  it('leaves matching files out of an audit', async () => {
    await grids('ex-audit', ['a.glb', 'b.glb', 'node_modules/c.glb', '.cache/d.glb']);
    const r = await runCli(['audit', 'ex-audit', '--exclude', 'b.glb', '--json'], tmp);
    expect(r.code, r.stderr).toBe(0);
    expect(JSON.parse(r.stdout).files.map((f: any) => f.input)).toEqual(['ex-audit/a.glb']);
  });
});

describe('brace globs', () => {
  it("'{*.glb,**/*.obj}' audits the top-level GLB files and every OBJ (it was an internal error)", async () => {
    const root = await grids('brace-cli', ['top.glb', 'sub/deep.glb']);
    fs.writeFileSync(path.join(root, 'sub', 'tri.obj'), 'v 0 0 0\nv 1 0 0\nv 0 1 0\nvt 0 0\nvt 1 0\nvt 0 1\nf 1/1 2/2 3/3\n');
    const r = await runCli(['audit', '{*.glb,**/*.obj}', '--json'], root);
    expect(r.code, r.stderr).toBe(0);
    expect(JSON.parse(r.stdout).files.map((f: any) => f.input)).toEqual(['sub/tri.obj', 'top.glb']);
  });
});
