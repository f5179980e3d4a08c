/**
 * The project commands of the command line (in process via main()): project new / import,
 * plan --project --name, plans, export; exit 2 for anything the user must change.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { listEdits, listStopSets } from '../../src/api/project.js';
import type { PlanReport, ProjectPlanRow } from '../../src/api/types.js';
import { main } from '../../src/cli/main.js';
import { capture, root, tempDir } from './support.js';

const tmp = tempDir('cli');
afterAll(() => tmp.cleanup());
const demo = path.join(root, 'demo-data', 'tallowmere-stops.csv');
const file = tmp.file('tallowmere.zoneplan');

async function cli(args: string[]): Promise<{ code: number; out: string; err: string }> {
  const io = capture();
  const code = await main(args, io);
  return { code, out: io.stdout(), err: io.stderr() };
}

describe('zoneplan project, plan --project, plans, export', () => {
  let first: { code: number; out: string; err: string };

  beforeAll(async () => {
    expect((await cli(['project', 'new', file])).code).toBe(0);
    first = await cli(['plan', demo, '-k', '5', '--seed', '2', '--restarts', '1', '--project', file, '--name', 'week 12', '--out', tmp.file('direct.geojson'), '--assignments', tmp.file('direct.csv')]);
  });

  it('saves the solved plan as a version and says so', () => {
    expect(first.code, first.err).toBe(0);
    expect(first.out.endsWith(`saved as plan week 12 in ${file}\n`)).toBe(true);
  });

  it('exports the saved plan as the same files the plan command wrote', async () => {
    const r = await cli(['export', file, '--plan', 'week 12', '--out', tmp.file('export.geojson'), '--assignments', tmp.file('export.csv')]);
    expect(r.code, r.err).toBe(0);
    expect(r.out).toBe(`wrote plan week 12 (4201 stops, 5 zones): ${tmp.file('export.geojson')}, ${tmp.file('export.csv')}\n`);
    expect(readFileSync(tmp.file('export.geojson'), 'utf8')).toBe(readFileSync(tmp.file('direct.geojson'), 'utf8'));
    expect(readFileSync(tmp.file('export.csv'), 'utf8')).toBe(readFileSync(tmp.file('direct.csv'), 'utf8'));
  });

  it('saves a child plan with --json, keeping stdout pure JSON', async () => {
    const r = await cli(['plan', demo, '-k', '6', '--restarts', '1', '--capacity', '2000', '--project', file, '--name', 'week 12, 6 vans', '--parent', 'week 12', '--json']);
    expect(r.code, r.err).toBe(0);
    const report = JSON.parse(r.out) as PlanReport;
    expect(report.zones).toHaveLength(6);
    expect(r.err).toContain(`saved as plan week 12, 6 vans in ${file}\n`);
  });

  it('lists the versions as a table and as JSON', async () => {
    const text = await cli(['plans', file]);
    expect(text.code).toBe(0);
    const lines = text.out.trimEnd().split('\n');
    expect(lines[0]).toMatch(/^name\s+saved \(UTC\)\s+stops\s+zones\s+objective km²\s+parent\s+edits\s+settings$/);
    expect(lines).toHaveLength(4);
    expect(lines[2]).toMatch(/^week 12\s+\d{4}-\d\d-\d\d \d\d:\d\d\s+4201\s+5\s+\S+\s+-\s+0\s+5 zones, seed 2, 1 start$/);
    expect(lines[3]).toMatch(/^week 12, 6 vans\s+.*\s+4201\s+6\s+\S+\s+week 12\s+0\s+6 zones, seed 1, 1 start, capacity 2000$/);
    const json = await cli(['plans', file, '--json']);
    const rows = JSON.parse(json.out) as ProjectPlanRow[];
    expect(rows.map((p) => [p.name, p.parent, p.zones, p.stops, p.source])).toEqual([
      ['week 12', null, 5, 4201, demo],
      ['week 12, 6 vans', 'week 12', 6, 4201, demo],
    ]);
    expect(rows[1]!.request).toMatchObject({ zones: 6, restarts: 1, capacity: 2000 });
  });

  it('refuses a duplicate name before solving', async () => {
    const r = await cli(['plan', demo, '-k', '4', '--project', file, '--name', 'Week 12']);
    expect(r.code).toBe(2);
    expect(r.out).toBe('');
    expect(r.err).toBe(`error: ${file} already has a plan named "week 12" (names are compared without regard to case); choose another name, or rename the old plan first\n`);
  });

  it('refuses an unknown parent before solving', async () => {
    const r = await cli(['plan', demo, '-k', '4', '--project', file, '--name', 'w13', '--parent', 'week 11']);
    expect(r.code).toBe(2);
    expect(r.out).toBe('');
    expect(r.err).toBe(`error: ${file} has no plan named "week 11"; its plans: "week 12", "week 12, 6 vans"\n`);
  });

  it('needs --project and --name together', async () => {
    const a = await cli(['plan', demo, '-k', '4', '--name', 'w13']);
    expect(a.code).toBe(2);
    expect(a.err).toContain('error: --name needs --project FILE (the project to save the plan in)');
    const b = await cli(['plan', demo, '-k', '4', '--project', file]);
    expect(b.code).toBe(2);
    expect(b.err).toContain('error: --project needs --name NAME');
    expect(a.out + b.out).toBe('');
  });

  it('refuses to export a plan that is not there, or nothing at all', async () => {
    const a = await cli(['export', file, '--plan', 'week 1', '--out', tmp.file('x.geojson')]);
    expect(a.code).toBe(2);
    expect(a.err).toBe(`error: ${file} has no plan named "week 1"; its plans: "week 12", "week 12, 6 vans"\n`);
    const b = await cli(['export', file, '--plan', 'week 12']);
    expect(b.code).toBe(2);
    expect(b.err).toContain('error: nothing to export: give --out FILE.geojson, --layers DIR and/or --assignments FILE.csv');
  });

  it('imports a stops file with its warnings', async () => {
    const stops = path.join(root, 'test', 'fixtures', 'warn', 'csv-zero-demand.csv');
    const r = await cli(['project', 'import', file, stops]);
    expect(r.code, r.err).toBe(0);
    expect(r.err).toMatch(/^warning: .*demand 0/);
    const sets = await listStopSets(file);
    expect(sets.at(-1)).toMatchObject({ source: stops, stops: 3 });
    expect(sets.at(-1)!.warnings.map((w) => w.code)).toEqual(['zero-demand']);
    expect(sets).toHaveLength(2); // the two plans of the demo share one stop set
    expect(await listEdits(file, 'week 12')).toEqual([]);
  });

  it('says so when a project has no plans yet', async () => {
    const empty = tmp.file('empty.zoneplan');
    await cli(['project', 'new', empty]);
    const r = await cli(['plans', empty]);
    expect(r).toEqual({ code: 0, out: `${empty} has no plans yet; save one with: zoneplan plan STOPS --zones K --project ${empty} --name NAME\n`, err: '' });
  });
});
