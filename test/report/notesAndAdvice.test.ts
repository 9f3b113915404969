// Notes (mirrored triangles, stacked UV shells) are shown apart from findings in every output,
// and each finding kind has one line of advice on the HTML page (DESIGN.md, Report), on the
// bundled demo (examples/harbor-props: the crate mirrors two of its four stacked side panels).
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ADVICE } from '../../src/report/advice.js';
import { GATE_NAMES } from '../../src/lib/options.js';
import { runCli } from '../helpers/cli.js';

const repo = path.resolve(__dirname, '../..');
let tmp = '';
let stdout = '';
let report: any;
let html = '';
let junit = '';

beforeAll(async () => {
  tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-notes-'));
  const r = await runCli(
    ['audit', path.join(repo, 'examples/harbor-props'), '--fail-on', 'degenerate-uv', '--report', path.join(tmp, 'r.json'),
      '--html', path.join(tmp, 'r.html'), '--junit', path.join(tmp, 'r.xml'), '--jobs', '1'],
    tmp,
  );
  expect(r.code).toBe(1); // the lobster trap's collapsed UVs
  stdout = r.stdout;
  report = JSON.parse(fs.readFileSync(path.join(tmp, 'r.json'), 'utf8'));
  html = fs.readFileSync(path.join(tmp, 'r.html'), 'utf8');
  junit = fs.readFileSync(path.join(tmp, 'r.xml'), 'utf8');
});
afterAll(() => {
  fs.rmSync(tmp, { recursive: true, force: true });
});

const crate = () => report.files.find((f: any) => f.input.endsWith('crate.gltf'));

describe('notes apart from findings', () => {
  it('theCratesMirroredAndStackedPanelsAreNotesAndTheFileIsClean', () => {
    const p = crate().primitives[0];
    // 6 faces of 2 triangles; the 4 side faces share one panel, 2 of them mirrored (their
    // quads split the other way in UV), top and bottom share the other: every triangle lies
    // exactly on another shell, none overlaps partly.
    expect(p.mirroredTriangles).toBe(4);
    expect(p.stackedShells.count).toBe(12);
    expect(p.uvOverlap.count).toBe(0);
    expect(report.summary.clean).toBeGreaterThanOrEqual(1);
    expect(stdout).toMatch(/^ok\s+\S*crate\.gltf\s+\(1 of 1 primitives, 12 triangles, no findings; notes: 4 mirrored triangles, 12 triangles in stacked UV shells\)$/m);
  });

  it('theHtmlPageShowsNotesInTheirOwnColumnsAndCards', () => {
    expect(html).toContain('<th>note: mirrored</th><th>note: stacked shells</th>');
    expect(html).toMatch(/data-key="stackedShells"><span class="num">\d+<\/span><span class="label">note: triangles in stacked UV shells/);
    expect(html).toContain('Mirrored triangles and UV shells stacked exactly on one another are deliberate layouts, not problems');
  });

  it('junitCarriesNotesAsSystemOutNotAsFailures', () => {
    const name = crate().input;
    const at = junit.indexOf(`name="${name}"`);
    const end = junit.indexOf('</testcase>', at);
    const body = junit.slice(at, end);
    expect(body).toContain('<system-out>notes (not problems): 4 mirrored triangles, 12 triangles in stacked UV shells</system-out>');
    expect(body).not.toContain('<failure');
  });
});

describe('advice lines', () => {
  it('everyFindingKindHasOneLineOfAdvice', () => {
    for (const g of GATE_NAMES) {
      expect(ADVICE[g], g).toBeTruthy();
      expect(ADVICE[g].includes('\n'), g).toBe(false);
    }
  });

  it('theHtmlPageGivesTheAdviceOfTheKindsAFileShows', () => {
    // The lobster trap: degenerate UV triangles (gated); the dock plank: partial UV overlaps.
    const section = (end: string) => {
      const at = html.indexOf(`data-input="${report.files.find((f: any) => f.input.endsWith(end)).input}"`, html.indexOf('<section'));
      return html.slice(at, html.indexOf('</section>', at));
    };
    const escape = (s: string) => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;');
    const trap = section('lobster_trap.glb');
    expect(trap).toContain(`<dt>degenerate-uv</dt><dd>${escape(ADVICE['degenerate-uv'])}</dd>`);
    expect(trap).toContain('degenerate-uv 12 &gt; 0');
    expect(trap).not.toContain('<dt>uv-overlap</dt>');
    const plank = section('dock_plank.obj');
    expect(plank).toContain(`<dt>uv-overlap</dt><dd>${escape(ADVICE['uv-overlap'])}</dd>`);
  });
});
