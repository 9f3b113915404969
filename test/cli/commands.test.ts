/**
 * The command line loads a command's code only when that command runs (src/cli/commands.ts):
 * the built CLI is started with a module hook that lists every file it loads.
 */
import { execFileSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';

const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-commands-'));
afterAll(() => fs.rmSync(tmp, { recursive: true, force: true }));

// Registers a resolve hook (it runs for the main thread and for workers) that appends each
// resolved file URL to the list file.
const list = path.join(tmp, 'loaded.txt');
const hook = path.join(tmp, 'hook.mjs');
fs.writeFileSync(hook, `import { register } from 'node:module';
register('data:text/javascript,' + encodeURIComponent(\`
import { appendFileSync } from 'node:fs';
export async function resolve(s, c, n) { const r = await n(s, c); if (r.url.startsWith('file:')) appendFileSync(${JSON.stringify(list)}, r.url + '\\\\n'); return r; }\`));
`);

/** Files of the package (relative to the repository) that one CLI run loads. */
function loaded(args: string[]): string[] {
  fs.rmSync(list, { force: true });
  execFileSync(process.execPath, ['--import', hook, path.join(repoRoot, 'bin', 'tanframe.js'), ...args], { cwd: tmp, stdio: 'pipe' });
  const urls = fs.readFileSync(list, 'utf8').split('\n').filter(Boolean);
  return [...new Set(urls.map((u) => path.relative(repoRoot, fileURLToPath(u)).split(path.sep).join('/')))];
}

describe('lazy command loading', () => {
  it('--version loads commander and the option parsers, no reader, solver, writer or report code', () => {
    const files = loaded(['--version']);
    expect(files).toContain('dist/cli/commands.js');
    const heavy = files.filter((f) => /^dist\/(io\/(?!limits\.js)|frames|diagnose|imaging\/(png|convert)|report)\//.test(f) || /node_modules\/(fast-png|draco3d|meshoptimizer|picomatch)\//.test(f));
    expect(heavy).toEqual([]);
  });

  it('baking one GLB loads the GLB reader and writer but no PNG codec, HTML page, SVG pictures or decoders', () => {
    const input = path.join(repoRoot, 'fixtures', 'values', 'single-triangle.glb');
    const files = loaded(['bake', input, '-o', path.join(tmp, 'out.glb'), '--quiet']);
    expect(files).toEqual(expect.arrayContaining(['dist/io/gltfRead.js', 'dist/io/gltfWrite.js', 'dist/frames/mikktspace.js']));
    const unused = files.filter((f) => /^dist\/(imaging\/(png|convert)|report\/(html|uvMapSvg)|lib\/mergeReports)\.js$/.test(f) || /node_modules\/(fast-png|draco3d|meshoptimizer)\//.test(f));
    expect(unused).toEqual([]);
  });

  it('a single input runs on the main thread under the default file timeout, one with pictures on a worker thread', () => {
    const input = path.join(repoRoot, 'fixtures', 'values', 'single-triangle.glb');
    expect(loaded(['bake', input, '-o', path.join(tmp, 'alone.glb'), '--quiet'])).not.toContain('dist/cli/worker.js');
    expect(loaded(['audit', input, '--uv-maps', path.join(tmp, 'maps'), '--quiet'])).toContain('dist/cli/worker.js');
  });
});
