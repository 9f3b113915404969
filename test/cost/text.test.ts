/**
 * Cost growth of the text readers (OBJ, MTL) and of warnings: each generator at x1 and x4
 * (test/helpers/costGrowth.ts), time and peak memory within 2x of linear, or refused with a
 * stable code. Sizes grow under `npm run fuzz` (COST_SCALE).
 */
import { describe, it } from 'vitest';
import { checkGrowth, costTask } from '../helpers/costGrowth.js';

/** One triangle whose face line is continued by `pieces` lines holding only a backslash. */
function continuedObj(pieces: number): string {
  return 'v 0 0 0\nv 1 0 0\nv 0 1 0\nvt 0 0\nvt 1 0\nvt 0 1\nf 1/1 2/2 3/3 \\\n' + '\\\n'.repeat(Math.ceil(pieces)) + '\n';
}

/** `count` triangles on the same three positions, each with its own texture coordinates. */
function manyUvsOnePosition(count: number): string {
  const parts = ['v 0 0 0\nv 1 0 0\nv 0 1 0\n'];
  const n = Math.ceil(count);
  for (let k = 0; k < n; k++) parts.push(`vt ${(k % 1000) / 1000} ${Math.floor(k / 1000) / 1000}\n`);
  for (let k = 1; k <= n; k++) parts.push(`f 1/${k} 2/${k} 3/${k}\n`);
  return parts.join('');
}

describe('OBJ reading cost', () => {
  it('grows linearly with a chain of continued lines', async () => {
    await checkGrowth({
      name: 'OBJ continuation chain',
      files: (scale) => ({ 'a.obj': continuedObj(1_280_000 * scale) }),
      task: costTask('readAsset', 'a.obj'),
    });
  });

  it('grows linearly with many texture coordinates on one position', async () => {
    await checkGrowth({
      name: 'OBJ corners sharing one position',
      files: (scale) => ({ 'a.obj': manyUvsOnePosition(20_000 * scale) }),
      task: costTask('readAsset', 'a.obj'),
    });
  });
});

/** An OBJ triangle whose material's texture statement carries `options` unknown options. */
function manyUnknownOptions(options: number): Record<string, string> {
  return {
    'a.obj': 'mtllib a.mtl\nv 0 0 0\nv 1 0 0\nv 0 1 0\nvt 0 0\nvt 1 0\nvt 0 1\nusemtl m\nf 1/1 2/2 3/3\n',
    'a.mtl': `newmtl m\nmap_Kd ${'-x '.repeat(Math.ceil(options))}a.png\n`,
  };
}

describe('warnings cost', () => {
  it('grows linearly with an MTL line of unknown options', async () => {
    await checkGrowth({
      name: 'MTL line of unknown texture options',
      files: (scale) => manyUnknownOptions(50_000 * scale),
      task: costTask('cliJson', 'audit', 'a.obj'),
    });
  });
});
