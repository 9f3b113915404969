#!/usr/bin/env node
/**
 * Writes fixtures/pins/outputs.json: the SHA-256 pins of what tanframe bakes for the test
 * meshes, the hostile-value fixtures, the demo props and the shared glTF samples, both methods
 * (test/helpers/outputPins.ts computes them from the TypeScript sources; the test
 * test/lib/pinnedOutputs.test.ts compares against this file). Run it only in a commit that
 * changes outputs on purpose, and commit the result alone with that change.
 *   node scripts/make-output-pins.mjs
 * The samples group is written only when ../shared/datasets/gltf-samples is present (otherwise
 * the existing samples pins are kept and the script says SKIPPED).
 */
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { register } from 'node:module';
import * as path from 'node:path';

register(new URL('../test/helpers/tsLoader.mjs', import.meta.url));
const pinsMod = await import(new URL('../test/helpers/outputPins.ts', import.meta.url).href);
const { pinsFile, meshPins, fileGroups, groupPins } = pinsMod;

const old = existsSync(pinsFile) ? JSON.parse(readFileSync(pinsFile, 'utf8')) : {};
const pins = { meshes: meshPins() };
for (const g of fileGroups()) {
  if (!g.present) {
    console.warn(`SKIPPED: ${g.dir} not found; keeping the ${g.group} pins already in ${path.basename(pinsFile)}`);
    if (old[g.group]) pins[g.group] = old[g.group];
    continue;
  }
  pins[g.group] = await groupPins(g.dir, g.whole);
}
mkdirSync(path.dirname(pinsFile), { recursive: true });
writeFileSync(pinsFile, JSON.stringify(pins, null, 1) + '\n');
const counts = Object.entries(pins).map(([g, p]) => `${g} ${Object.keys(p).length}`).join(', ');
console.log(`wrote ${path.relative(process.cwd(), pinsFile)} (${counts})`);
