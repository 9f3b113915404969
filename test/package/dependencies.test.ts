// Dependencies earn their place: every runtime dependency in package.json is imported by the
// shipped code (dist/), every package the shipped code imports is a declared runtime
// dependency, and each is reached only through its public entry points (the package's own
// "exports", or its main file when it declares none) -- never a private file by path.
// Dependencies that can change output bytes are pinned exactly.
import * as fs from 'node:fs';
import { builtinModules } from 'node:module';
import * as path from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
const pkg = JSON.parse(fs.readFileSync(path.join(repoRoot, 'package.json'), 'utf8'));
const BUILTINS = new Set(builtinModules.flatMap((m) => [m, `node:${m}`]));

function jsFiles(dir: string): string[] {
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((e) => {
    const p = path.join(dir, e.name);
    return e.isDirectory() ? jsFiles(p) : e.name.endsWith('.js') ? [p] : [];
  });
}

/** Bare specifiers of static imports/exports and of import() with a string literal, per file. */
function bareImports(): Map<string, string[]> {
  const out = new Map<string, string[]>();
  for (const file of [...jsFiles(path.join(repoRoot, 'dist')), path.join(repoRoot, 'bin/tanframe.js')]) {
    const text = fs.readFileSync(file, 'utf8');
    for (const m of text.matchAll(/(?:^|[\s;])(?:import|export)\s[^'"]*?from\s*['"]([^'"]+)['"]|import\(\s*['"]([^'"]+)['"]\s*\)|^import\s*['"]([^'"]+)['"]/gm)) {
      const spec = m[1] ?? m[2] ?? m[3];
      if (spec.startsWith('.') || BUILTINS.has(spec)) continue;
      if (!out.has(spec)) out.set(spec, []);
      out.get(spec)!.push(path.relative(repoRoot, file));
    }
    // No require() of a package and no computed import() of one.
    expect(text, path.relative(repoRoot, file)).not.toMatch(/\brequire\(\s*['"][^.'"][^'"]*['"]\s*\)/);
  }
  return out;
}

function packageName(spec: string): string {
  const parts = spec.split('/');
  return spec.startsWith('@') ? parts.slice(0, 2).join('/') : parts[0];
}

describe('runtime dependencies', () => {
  it('everyDeclaredDependencyIsImportedAndEveryImportIsDeclared', () => {
    const imports = bareImports();
    const used = new Set([...imports.keys()].map(packageName));
    const declared = Object.keys(pkg.dependencies).sort();
    expect([...used].sort()).toEqual(declared);
  });

  it('importsUseOnlyPublicEntryPoints', () => {
    for (const spec of bareImports().keys()) {
      const name = packageName(spec);
      const sub = spec === name ? '.' : `./${spec.slice(name.length + 1)}`;
      const dep = JSON.parse(fs.readFileSync(path.join(repoRoot, 'node_modules', name, 'package.json'), 'utf8'));
      if (dep.exports === undefined) {
        expect(sub, `${spec}: ${name} declares no exports, so only its main entry is public`).toBe('.');
      } else {
        const keys = typeof dep.exports === 'string' || !Object.keys(dep.exports).some((k) => k.startsWith('.')) ? ['.'] : Object.keys(dep.exports);
        expect(keys, `${spec} is one of ${name}'s exports`).toContain(sub);
      }
    }
  });

  it('dependenciesThatShapeOutputArePinnedExactly', () => {
    // Codecs, PNG coding and the renderer's matrix math decide output bytes.
    for (const name of ['draco3d', 'meshoptimizer', 'fast-png', 'fflate', 'gl-matrix']) {
      expect(pkg.dependencies[name], name).toMatch(/^\d+\.\d+\.\d+$/);
    }
    // The OBJ cross-check parser is a test tool only.
    expect(pkg.dependencies['@loaders.gl/obj']).toBeUndefined();
    expect(pkg.devDependencies['@loaders.gl/obj']).toMatch(/^\d+\.\d+\.\d+$/);
  });

  it('nothingIsBuiltOrRunWhenThePackageIsInstalled', () => {
    // Install-time scripts (and prepare, which npm runs for git and folder dependencies and
    // blocks without approval) are absent; dist/ is built when the package is packed.
    for (const event of ['preinstall', 'install', 'postinstall', 'prepare']) expect(pkg.scripts[event], event).toBeUndefined();
    expect(pkg.scripts.prepack).toBe('npm run build');
    expect(pkg.files).toEqual(expect.arrayContaining(['dist', 'bin', 'schema']));
    expect(pkg.sideEffects).toBe(false);
  });
});
