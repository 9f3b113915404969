// Module hooks for worker threads started by tests: load the TypeScript sources directly, so a
// worker runs the same code as the test that started it (not a possibly stale dist/ build).
// Resolves `./x.js` imported from a .ts file to `./x.ts` when that exists (NodeNext style), and
// strips types with vite's own transform (vite is a devDependency; vitest runs on it).
import { existsSync } from 'node:fs';
import { readFile } from 'node:fs/promises';
import { fileURLToPath } from 'node:url';
import { transformWithOxc } from 'vite';

export async function resolve(specifier, context, next) {
  if (context.parentURL?.endsWith('.ts') && specifier.startsWith('.') && specifier.endsWith('.js')) {
    const ts = new URL(specifier.slice(0, -3) + '.ts', context.parentURL);
    if (existsSync(fileURLToPath(ts))) return { url: ts.href, shortCircuit: true };
  }
  return next(specifier, context);
}

export async function load(url, context, next) {
  if (!url.startsWith('file:') || !url.endsWith('.ts')) return next(url, context);
  const file = fileURLToPath(url);
  const out = await transformWithOxc(await readFile(file, 'utf8'), file, { lang: 'ts' });
  return { format: 'module', source: out.code, shortCircuit: true };
}
