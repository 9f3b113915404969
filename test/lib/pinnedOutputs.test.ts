/**
 * Pinned outputs: what tanframe bakes for the test meshes, the hostile-value fixtures, the demo
 * props and the shared glTF samples, both methods, must match fixtures/pins/outputs.json bit
 * for bit (SHA-256 of tangents, indices, every replacement attribute and morph target, the
 * primitive reports and, for the demo and a few samples, the whole output files). Speed work
 * must leave every pin as it is; a change that alters outputs on purpose regenerates the pins
 * with `node scripts/make-output-pins.mjs` in its own commit (DEVELOPERS.md).
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { fileGroups, groupPins, meshPins, pinsFile, type Pins } from '../helpers/outputPins.js';

const pinned: Pins = JSON.parse(readFileSync(pinsFile, 'utf8'));

/** Keys whose hash differs, is missing or is new, for a readable failure. */
function differences(actual: Record<string, string>, expected: Record<string, string>): string[] {
  const keys = new Set([...Object.keys(actual), ...Object.keys(expected)]);
  return [...keys].sort().filter((k) => actual[k] !== expected[k]).map((k) => `${k}: ${expected[k] ? 'pinned' : 'new'}${actual[k] ? '' : ', now missing'}`);
}

describe('pinned outputs', () => {
  it('computeFrames on the test and bench meshes gives the pinned tangents, indices, source vertices and stats', () => {
    const actual = meshPins();
    expect(Object.keys(actual).length).toBeGreaterThan(20);
    expect(differences(actual, pinned.meshes)).toEqual([]);
  });

  for (const g of fileGroups()) {
    it.skipIf(!g.present)(`every file of ${g.group} bakes to the pinned attributes, indices, reports and files, both methods`, async () => {
      const actual = await groupPins(g.dir, g.whole);
      expect(Object.keys(actual).length).toBeGreaterThan(10);
      expect(differences(actual, pinned[g.group])).toEqual([]);
    });
    if (!g.present) console.warn(`SKIPPED: ${g.dir} not found; its pinned outputs are not compared`);
  }
});
