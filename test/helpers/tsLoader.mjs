// Module hooks for worker threads started by tests: load the TypeScript sources directly, so a
// worker runs the same code as the test that started it (not a possibly stale dist/ build).
// Resolves `./x.js` imported from a .ts file to `./x.ts` when that exists (NodeNext style), and
// strips types with the transform vite itself uses: `transform` of rolldown's public
// `rolldown/utils` entry, resolved from vite (vite is a devDependency; vitest runs on it).
// Loading it takes about a tenth of loading vite, and every worker thread a test starts pays it.
import { existsSync } from 'node:fs';
import { readFile } from 'node:fs/promises';
import { createRequire } from 'node:module';
import { fileURLToPath, pathToFileURL } from 'node:url';

const requireHere = createRequire(import.meta.url);
const { transform } = await import(pathToFileURL(createRequire(requireHere.resolve('vite')).resolve('rolldown/utils')).href);

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
  const out = await transform(file, await readFile(file, 'utf8'), { lang: 'ts' });
  if (out.errors?.length) throw new Error(`${file}: ${out.errors[0].message}`);
  return { format: 'module', source: out.code, shortCircuit: true };
}
