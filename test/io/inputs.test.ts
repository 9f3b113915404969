/**
 * Input discovery: the glob syntax (through picomatch), what folder walks leave out
 * (node_modules, names starting with '.', the run's own output folder, --exclude), and that a
 * file named explicitly is always taken.
 */
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { expandInputs, globDepth, globMatcher } from '../../src/io/inputs.js';

let tmp = '';
beforeAll(() => {
  tmp = fs.realpathSync(fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-inputs-')));
});
afterAll(() => {
  fs.rmSync(tmp, { recursive: true, force: true });
});

/** Creates empty files (discovery never reads them) under a fresh folder; returns the folder. */
function tree(name: string, files: string[]): string {
  const root = path.join(tmp, name);
  for (const f of files) {
    fs.mkdirSync(path.dirname(path.join(root, f)), { recursive: true });
    fs.writeFileSync(path.join(root, f), '');
  }
  return root;
}

/** The relative paths found, sorted. */
async function found(inputs: string[], cwd: string, discovery = {}): Promise<string[]> {
  const r = await expandInputs(inputs, cwd, discovery);
  return r.files.map((f) => path.relative(cwd, f.path).split(path.sep).join('/')).sort();
}

describe('glob syntax', () => {
  // Expected matches follow bash glob rules (brace expansion, ?, [...], globstar), which
  // picomatch implements; common practice.
  it('braces hold globs of their own, with and without slashes', () => {
    const m = globMatcher('{*.glb,**/*.obj}');
    expect(m('a.glb')).toBe(true);
    expect(m('deep/er/b.obj')).toBe(true);
    expect(m('c.obj')).toBe(true);
    expect(m('deep/a.glb')).toBe(false);
    expect(m('a.gltf')).toBe(false);
  });

  it('a question mark inside braces matches one character', () => {
    const m = globMatcher('{buoy?,crate}.glb');
    expect(m('buoy1.glb')).toBe(true);
    expect(m('crate.glb')).toBe(true);
    expect(m('buoy.glb')).toBe(false);
    expect(m('buoy12.glb')).toBe(false);
  });

  it('a question mark matches one character but never a slash', () => {
    const m = globMatcher('a?c.glb');
    expect(m('abc.glb')).toBe(true);
    expect(m('a/c.glb')).toBe(false);
    expect(m('ac.glb')).toBe(false);
  });

  it('classes match one listed character, ranges and negated classes included', () => {
    expect(globMatcher('[ab].glb')('a.glb')).toBe(true);
    expect(globMatcher('[ab].glb')('c.glb')).toBe(false);
    expect(globMatcher('part[0-9].glb')('part7.glb')).toBe(true);
    expect(globMatcher('[!a].glb')('a.glb')).toBe(false);
    expect(globMatcher('[!a].glb')('b.glb')).toBe(true);
  });

  it('a double star spans any number of folders, zero included', () => {
    const m = globMatcher('props/**/*.glb');
    expect(m('props/a.glb')).toBe(true);
    expect(m('props/x/y/z/a.glb')).toBe(true);
    expect(m('other/a.glb')).toBe(false);
  });

  it('a leading ! negates the pattern', () => {
    const m = globMatcher('!**/*.obj');
    expect(m('x/a.glb')).toBe(true);
    expect(m('x/a.obj')).toBe(false);
  });

  it('stars do not match dot-files or dot-folders unless the pattern spells the dot', () => {
    expect(globMatcher('*.glb')('.hidden.glb')).toBe(false);
    expect(globMatcher('**/*.glb')('.cache/a.glb')).toBe(false);
    expect(globMatcher('.*.glb')('.hidden.glb')).toBe(true);
    expect(globMatcher('.cache/*.glb')('.cache/a.glb')).toBe(true);
  });
});

describe('globs as inputs', () => {
  it('a brace pattern mixing a plain and a ** alternative finds both kinds (was an internal error)', async () => {
    const root = tree('braces', ['a.glb', 'b.gltf', 'sub/c.obj', 'sub/d.glb', 'e.obj']);
    expect(await found(['{*.glb,**/*.obj}'], root)).toEqual(['a.glb', 'e.obj', 'sub/c.obj']);
  });

  it('a question mark inside braces finds files (it silently matched nothing)', async () => {
    const root = tree('qbraces', ['buoy1.glb', 'buoy2.glb', 'crate.glb', 'mast.glb']);
    expect(await found(['{buoy?,crate}.glb'], root)).toEqual(['buoy1.glb', 'buoy2.glb', 'crate.glb']);
  });

  it('a glob under a literal base folder mirrors paths relative to that base', async () => {
    const root = tree('based', ['props/x/a.glb', 'props/b.obj', 'other/c.glb']);
    const r = await expandInputs(['props/**/*.glb'], root);
    expect(r.files.map((f) => f.relative)).toEqual(['x/a.glb']);
  });

  it('a glob without ** walks no deeper than its own levels (a rooted "/*.glb" once walked the whole disk)', async () => {
    // depth/
    //   a.glb            <- '*.glb' reaches it (depth 1)
    //   one/b.glb        <- '*/*.glb' and '{*.glb,one/*.glb}' reach it (depth 2)
    //   one/two/c.glb    <- only '**' reaches it
    const root = tree('depth', ['a.glb', 'one/b.glb', 'one/two/c.glb']);
    expect(globDepth('*.glb')).toBe(1);
    expect(globDepth('*/*.glb')).toBe(2);
    expect(globDepth('{*.glb,one/*.glb}')).toBe(2);
    expect(globDepth('one/**/*.glb')).toBe(Infinity);
    expect((await expandInputs(['*/*.glb'], root)).files.map((f) => f.relative)).toEqual(['one/b.glb']);
    expect((await expandInputs(['{*.glb,one/*.glb}'], root)).files.map((f) => f.relative)).toEqual(['a.glb', 'one/b.glb']);
    expect((await expandInputs(['**/c.glb'], root)).files.map((f) => f.relative)).toEqual(['one/two/c.glb']);
  });

  it('an --exclude pattern whose braces expand past the cap is a usage error, not an internal one', async () => {
    const root = tree('badexclude', ['a.glb']);
    // 11 pairs of alternatives: 2^11 = 2048 patterns, past the 1000 allowed.
    await expect(expandInputs([root], root, { exclude: ['{a,b}'.repeat(11)] })).rejects.toMatchObject({ code: 'usage' });
    expect((await expandInputs([root], root, { exclude: ['{a,b}'.repeat(9)] })).files).toHaveLength(1);
  });
});

describe('folder walks', () => {
  it('leave out node_modules and dot-folders at any depth, but not dot-files', async () => {
    const root = tree('skips', [
      'a.glb', 'node_modules/pkg/b.glb', '.git/c.glb', '.cache/d.gltf', 'sub/.e.glb', 'sub/f.obj', 'sub/node_modules/g.glb', 'sub/.h/i.glb',
    ]);
    expect(await found(['.'], root)).toEqual(['a.glb', 'sub/.e.glb', 'sub/f.obj']);
  });

  it('enter a dot-folder or node_modules named on the command line', async () => {
    const root = tree('named', ['.assets/a.glb', 'node_modules/b.glb']);
    expect(await found(['.assets', 'node_modules'], root)).toEqual(['.assets/a.glb', 'node_modules/b.glb']);
  });

  it('leave out the run\'s own output folder, found through a symbolic link too', async () => {
    const root = tree('nest', ['a.glb', 'sub/b.glb', 'baked/a.glb', 'baked/sub/b.glb']);
    fs.symlinkSync(path.join(root, 'baked'), path.join(root, 'link'));
    expect(await found(['.'], root, { skipFolders: ['baked'] })).toEqual(['a.glb', 'sub/b.glb']);
  });

  it('--exclude without a slash leaves out files and folders of that name at any depth', async () => {
    const root = tree('exname', ['a.glb', 'wip/b.glb', 'deep/wip/c.glb', 'deep/d.obj', 'deep/e.obj']);
    expect(await found(['.'], root, { exclude: ['wip', 'e.*'] })).toEqual(['a.glb', 'deep/d.obj']);
  });

  it('--exclude with a slash matches paths relative to the working folder, folders included', async () => {
    const root = tree('expath', ['props/a.glb', 'props/legacy/b.glb', 'props/legacy/x/c.glb', 'third_party/d.glb', 'e.glb']);
    expect(await found(['.'], root, { exclude: ['props/legacy', 'third_party/**'] })).toEqual(['e.glb', 'props/a.glb']);
  });

  it('--exclude with a slash also matches paths from the folder being walked', async () => {
    const root = tree('exbase', ['assets/a.glb', 'assets/wip/b.glb', 'other/wip/c.glb']);
    expect(await found(['assets', 'other'], root, { exclude: ['wip/**'] })).toEqual(['assets/a.glb']);
  });

  it('--exclude applies to globs as well', async () => {
    const root = tree('exglob', ['a.glb', 'b.glb', 'sub/c.glb']);
    expect(await found(['**/*.glb'], root, { exclude: ['b.glb'] })).toEqual(['a.glb', 'sub/c.glb']);
  });

  it('a file named explicitly is taken even when --exclude matches it', async () => {
    const root = tree('explicit', ['a.glb', 'b.glb']);
    expect(await found(['a.glb', 'b.glb'], root, { exclude: ['a.glb'] })).toEqual(['a.glb', 'b.glb']);
  });
});
