// The package's entries as a consumer meets them (built dist/, resolved through package.json
// "exports"): `tanframe` (the library, no command line), `tanframe/frames` (the frame solve,
// no Node.js), `tanframe/cli`. Nothing may run at import time, the frames declarations must
// compile without Node.js types, `require()` works on Node 20.19+ (and otherwise says to use
// import), and every type an exported signature names is exported too.
import { execFileSync, spawnSync } from 'node:child_process';
import { builtinModules, createRequire } from 'node:module';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';

const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-entries-'));
afterAll(() => fs.rmSync(tmp, { recursive: true, force: true }));

const BUILTINS = new Set(builtinModules.flatMap((m) => [m, `node:${m}`]));

/**
 * Bundles one entry with every Node.js built-in replaced by a module that throws on any use
 * (the way a browser bundler leaves them empty), so a module that touches Node.js while it is
 * being imported fails to load. Returns the bundle and the files it took in.
 */
async function bundleWithUnusableNode(specifier: string, dependencies: 'bundled' | 'external' = 'bundled'): Promise<{ file: string; inputs: string[] }> {
  const esbuild = await import('esbuild');
  const file = path.join(tmp, `${specifier.replace(/\W/g, '_')}.mjs`);
  const result = await esbuild.build({
    // The entry file as the package's "exports" resolve it.
    entryPoints: [createRequire(path.join(repoRoot, 'package.json')).resolve(specifier)],
    packages: dependencies === 'external' ? 'external' : undefined,
    bundle: true,
    platform: 'neutral',
    mainFields: ['module', 'main'],
    format: 'esm',
    outfile: file,
    metafile: true,
    logLevel: 'silent',
    plugins: [{
      name: 'unusable-node',
      setup(build) {
        build.onResolve({ filter: /.*/ }, (args) => (BUILTINS.has(args.path) ? { path: args.path, namespace: 'unusable-node' } : undefined));
        build.onLoad({ filter: /.*/, namespace: 'unusable-node' }, (args) => ({
          contents: `module.exports = new Proxy({}, { get(_, key) { if (key === '__esModule') return undefined; throw new Error('import-time use of ${args.path}.' + String(key)); } });`,
          loader: 'js',
        }));
      },
    }],
  });
  return { file, inputs: Object.keys(result.metafile!.inputs) };
}

describe('package entries', () => {
  it('nothingRunsAtImportTimeInAnyEntry', async () => {
    // The library entries with their dependencies bundled too (they reach browsers' bundlers);
    // the command line with its dependencies left to Node (commander is a Node.js program's
    // library: it extends EventEmitter when it loads).
    for (const [specifier, names, dependencies] of [
      ['tanframe', ['computeFrames', 'readAsset', 'readAssetBytes', 'encodeGltf', 'TanframeError'], 'bundled'],
      ['tanframe/frames', ['computeFrames', 'TanframeError'], 'bundled'],
      ['tanframe/cli', ['main'], 'external'],
    ] as const) {
      const { file } = await bundleWithUnusableNode(specifier, dependencies);
      // Importing the bundle runs every module's top level; a read of fs.constants, a call of
      // os.hostname() or the like at that point throws here.
      const mod = await import(pathToFileURL(file).href);
      for (const n of names) expect(typeof mod[n], `${specifier} exports ${n}`).toBe('function');
    }
  });

  it('mainEntryIsTheLibraryWithoutTheCommandLine', async () => {
    const { inputs } = await bundleWithUnusableNode('tanframe');
    expect(inputs.some((f) => f.includes('dist/frames/computeFrames.js'))).toBe(true);
    expect(inputs.filter((f) => f.includes('dist/cli/') || f.includes('node_modules/commander/'))).toEqual([]);
    const lib = await import('tanframe');
    expect('runCli' in lib || 'main' in lib).toBe(false);
  });

  it('framesEntryImportsNoNodeModule', async () => {
    const { inputs } = await bundleWithUnusableNode('tanframe/frames');
    expect(inputs.filter((f) => f.startsWith('unusable-node:'))).toEqual([]);
    expect(inputs.filter((f) => f.includes('node_modules/'))).toEqual([]);
  });

  it('framesDeclarationsCompileStrictWithoutNodeTypes', () => {
    // A consumer project whose node_modules holds only tanframe (its package.json and dist/):
    // no @types/node anywhere it could be found, types: [] and lib without DOM.
    const project = path.join(tmp, 'frames-consumer');
    const pkg = path.join(project, 'node_modules', 'tanframe');
    fs.mkdirSync(pkg, { recursive: true });
    fs.cpSync(path.join(repoRoot, 'dist'), path.join(pkg, 'dist'), { recursive: true });
    fs.copyFileSync(path.join(repoRoot, 'package.json'), path.join(pkg, 'package.json'));
    fs.writeFileSync(path.join(project, 'consumer.ts'), [
      "import { computeFrames, TanframeError, type FrameInput, type FrameOptions, type FrameResult } from 'tanframe/frames';",
      'const input: FrameInput = { positions: new Float32Array(9), normals: new Float32Array(9), uvs: new Float32Array(6) };',
      "const options: FrameOptions = { method: 'mikktspace', uvOrigin: 'top-left' };",
      'const r: FrameResult = computeFrames(input, options);',
      'const w: number = r.tangents[3] + r.stats.splitVertices;',
      "export const ok: boolean = w !== 0 || new TanframeError('invalid-argument', 'x').code === 'invalid-argument';",
      '',
    ].join('\n'));
    fs.writeFileSync(path.join(project, 'tsconfig.json'), JSON.stringify({
      compilerOptions: { strict: true, noEmit: true, target: 'ES2022', module: 'NodeNext', moduleResolution: 'NodeNext', lib: ['ES2022'], types: [], skipLibCheck: false },
      files: ['consumer.ts'],
    }));
    fs.writeFileSync(path.join(project, 'package.json'), JSON.stringify({ name: 'frames-consumer', private: true, type: 'module' }));
    const tsc = path.join(repoRoot, 'node_modules', '.bin', 'tsc');
    const r = spawnSync(tsc, ['-p', project], { encoding: 'utf8' });
    expect(r.stdout + r.stderr).toBe('');
    expect(r.status).toBe(0);
    // The same consumer fails when it misuses the API: the check is real.
    fs.appendFileSync(path.join(project, 'consumer.ts'), "export const bad: string = computeFrames(input).tangents;\n");
    const bad = spawnSync(tsc, ['-p', project], { encoding: 'utf8' });
    expect(bad.status).not.toBe(0);
  });

  it('requireWorksOnNode20_19AndOtherwiseSaysToUseImport', () => {
    // Node 20.19+ loads an ES module through require() (no top-level await in the graph).
    const script = "const t = require('tanframe'); const f = require('tanframe/frames'); const c = require('tanframe/cli');"
      + "process.stdout.write([typeof t.computeFrames, typeof t.readAssetBytes, typeof f.computeFrames, typeof c.main].join(','));";
    const out = execFileSync(process.execPath, ['-e', script], { cwd: repoRoot, encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] });
    expect(out).toBe('function,function,function,function');
    // Without require(esm) (older Node 20 releases) the error tells the user to use import().
    const old = spawnSync(process.execPath, ['--no-experimental-require-module', '-e', "require('tanframe')"], { cwd: repoRoot, encoding: 'utf8' });
    expect(old.status).not.toBe(0);
    expect(old.stderr).toMatch(/ERR_REQUIRE_ESM/);
    expect(old.stderr).toMatch(/dynamic import\(\)/);
  });

  it('everyTypeInAnExportedSignatureIsExported', () => {
    // Walks the declarations reachable from each entry: every named type that an exported
    // declaration mentions (and, transitively, the types those mention) must be exported by
    // the entry itself, so a consumer can name it.
    for (const entry of ['index.d.ts', 'frames/index.d.ts', 'cli/index.d.ts']) {
      expect(unexportedTypes(path.join(repoRoot, 'dist'), entry), entry).toEqual([]);
    }
  });

  it('contractBreachesThrowTanframeErrorWithAStableCode', async () => {
    const { computeFrames, readAsset, readAssetBytes, decodePng, encodePng, TanframeError } = await import('tanframe');
    const breaches: (() => unknown)[] = [
      () => computeFrames(undefined as any),
      () => computeFrames({ positions: [0, 0, 0] as any, normals: new Float32Array(3), uvs: new Float32Array(2) }),
      () => computeFrames({ positions: new Float32Array(9), normals: new Float32Array(6), uvs: new Float32Array(6) }),
      () => computeFrames({ positions: new Float32Array(9), normals: new Float32Array(9), uvs: new Float32Array(6) }, { method: 'other' as any }),
      () => encodePng({ width: 2, height: 2, channels: 3, depth: 8, data: new Uint8Array(3) }),
    ];
    for (const breach of breaches) {
      let thrown: unknown = null;
      try { breach(); } catch (e) { thrown = e; }
      expect(thrown).toBeInstanceOf(TanframeError);
      expect((thrown as InstanceType<typeof TanframeError>).code).toBe('invalid-argument');
    }
    await expect(readAssetBytes('not bytes' as any, 'a.glb')).rejects.toMatchObject({ name: 'TanframeError', code: 'invalid-argument' });
    await expect(readAsset(42 as any)).rejects.toMatchObject({ name: 'TanframeError', code: 'invalid-argument' });
    expect(() => decodePng('png' as any)).toThrow(expect.objectContaining({ code: 'invalid-argument' }));
  });
});

/**
 * Type names reachable from `entry`'s exports through the declarations in `dist` that `entry`
 * does not export. Declarations are split at top-level `interface` / `type` / `function` /
 * `class` / `const` lines (the shape tsc emits); doc comments are ignored.
 */
function unexportedTypes(dist: string, entry: string): string[] {
  const read = (f: string) => fs.readFileSync(f, 'utf8');
  const entryFile = path.join(dist, entry);
  const exported = new Set<string>();
  for (const m of read(entryFile).matchAll(/export (?:type )?\{([^}]*)\}/g)) {
    for (const part of m[1].split(',')) {
      const name = part.trim().replace(/^type /, '').split(/\s+as\s+/).pop();
      if (name) exported.add(name);
    }
  }
  const files = new Set<string>();
  const visit = (f: string) => {
    if (files.has(f)) return;
    files.add(f);
    for (const m of read(f).matchAll(/from '(\.[^']+)'/g)) visit(path.resolve(path.dirname(f), m[1].replace(/\.js$/, '.d.ts')));
  };
  visit(entryFile);
  const decls = new Map<string, string>();
  for (const f of files) {
    const s = read(f);
    const starts = [...s.matchAll(/^(?:export )?(?:declare )?(?:interface|type|function|class|const|let|enum) (\w+)/gm)];
    starts.forEach((m, i) => {
      const end = i + 1 < starts.length ? starts[i + 1].index! : s.length;
      if (!decls.has(m[1])) decls.set(m[1], `${path.relative(dist, f)}\n${s.slice(m.index!, end)}`);
    });
  }
  const seen = new Set<string>();
  const missing: string[] = [];
  const queue = [...exported];
  while (queue.length > 0) {
    const name = queue.pop()!;
    if (seen.has(name)) continue;
    seen.add(name);
    const d = decls.get(name);
    if (d === undefined) continue;
    if (!exported.has(name)) missing.push(`${name} (${d.split('\n')[0]})`);
    const body = d.replace(/\/\*\*[\s\S]*?\*\//g, '').replace(/^.*\n(?:export )?(?:declare )?(?:interface|type|function|class|const|let|enum) \w+/, '');
    for (const w of body.matchAll(/\b([A-Z]\w*)\b/g)) if (decls.has(w[1])) queue.push(w[1]);
  }
  return missing.sort();
}
