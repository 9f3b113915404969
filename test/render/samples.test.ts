// Every shared sample (../shared/datasets/gltf-samples, licences in MANIFEST.md there) and every
// demo prop (examples/harbor-props) renders without error: the default sheet at a small size, a
// picture of the expected size with something drawn on it.
import * as fs from 'node:fs';
import * as path from 'node:path';
import { describe, expect, it } from 'vitest';
import { readAsset } from '../../src/lib/processFile.js';
import { buildRenderScene, defaultRenderOptions } from '../../src/lib/renderAsset.js';
import { renderSheet } from '../../src/render/index.js';

const repo = path.resolve(__dirname, '../..');
const samples = path.resolve(repo, '../shared/datasets/gltf-samples');
const present = fs.existsSync(samples);
if (!present) console.warn(`SKIPPED: ${samples} is absent (shared datasets not installed); the sample renders did not run`);

function meshFiles(dir: string): string[] {
  const out: string[] = [];
  for (const e of fs.readdirSync(dir, { withFileTypes: true }).sort((a, b) => (a.name < b.name ? -1 : 1))) {
    const p = path.join(dir, e.name);
    if (e.isDirectory()) out.push(...meshFiles(p));
    else if (/\.(glb|gltf|obj)$/i.test(e.name)) out.push(p);
  }
  return out;
}

/** Renders `file` (all views of DESIGN.md's default, every mode, 48 px); returns the covered pixels of the first cell row. */
async function renderFile(file: string): Promise<{ drawn: number; notes: string[] }> {
  const o = { ...defaultRenderOptions(), size: 48 };
  const built = await buildRenderScene(await readAsset(file), o);
  const s = renderSheet(built.scene, { views: o.views, modes: o.modes, size: o.size, light: o.light, labels: built.labels });
  expect(s.width).toBeGreaterThan(4 * 48);
  let drawn = 0;
  for (let i = 3; i < s.rgba.length; i += 4) if (s.rgba[i] > 0) drawn++;
  return { drawn, notes: built.notes };
}

describe('rendering real files', () => {
  it('renders every demo prop', async () => {
    const files = meshFiles(path.join(repo, 'examples/harbor-props'));
    expect(files.length).toBeGreaterThanOrEqual(6);
    for (const f of files) {
      const r = await renderFile(f);
      // The labels alone cover a few thousand pixels; a drawn model adds to them.
      expect(r.drawn, path.relative(repo, f)).toBeGreaterThan(3000);
    }
  }, 120_000);

  it.skipIf(!present)('renders every shared sample', async () => {
    const files = meshFiles(samples);
    expect(files.length).toBeGreaterThan(20);
    const lines: string[] = [];
    for (const f of files) {
      const r = await renderFile(f);
      lines.push(`${path.relative(samples, f)}: ${r.drawn} px${r.notes.length ? `; ${r.notes.join('; ')}` : ''}`);
    }
    console.log(lines.join('\n'));
  }, 300_000);
});
