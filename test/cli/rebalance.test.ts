/**
 * `zoneplan rebalance` and `zoneplan compare` end to end (in process via main()) on a temporary
 * project: project new, project import, plan --project, rebalance --max-moved 5%, compare, with
 * the printed numbers checked against the saved plans; bad budgets exit 2 with a clear message.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { listPlans, loadPlan } from '../../src/api/project.js';
import type { PlanComparison, RebalanceReport } from '../../src/api/types.js';
import { main } from '../../src/cli/main.js';
import { readStopsFile } from '../../src/io/read.js';
import { capture, tempDir } from '../store/support.js';
import { stopSet, stopsCsv, towns } from '../fixtures/rebalance/towns.js';

const tmp = tempDir('rebalance-cli');
afterAll(() => tmp.cleanup());
const project = tmp.file('depot.zoneplan');
const oldCsv = tmp.file('week1.csv');
const newCsv = tmp.file('week2.csv');

async function cli(args: string[]): Promise<{ code: number; out: string; err: string }> {
  const io = capture();
  const code = await main(args, io);
  return { code, out: io.stdout(), err: io.stderr() };
}

/** Demand as the CLI prints it: whole numbers as they are, others to 2 decimals. */
const amount = (x: number): string => (Number.isInteger(x) ? String(x) : x.toFixed(2));

/** The lines of a text table after its header and rule, split on runs of 2+ spaces. */
function tableRows(text: string, header: RegExp): string[][] {
  const lines = text.split('\n');
  const at = lines.findIndex((l) => header.test(l.trim()));
  expect(at, `no table ${header} in:\n${text}`).toBeGreaterThanOrEqual(0);
  const rows: string[][] = [];
  for (let i = at + 2; i < lines.length && lines[i]!.trim() !== ''; i++) rows.push(lines[i]!.trim().split(/\s{2,}/));
  return rows;
}

describe('zoneplan rebalance and compare', () => {
  // 12 towns of 50 stops; week 2: town 5's demand up by half, 4 stops gone, 5 new ones.
  const t = towns(new Array(12).fill(50), 41);
  let total1 = 0;
  for (const w of t.stops.demand) total1 += w;
  const capacity = Math.ceil((1.25 * total1) / 6);
  const keep = t.stops.ids.map((_, i) => i).filter((i) => ![3, 77, 300, 599].includes(i));
  const week2 = stopSet(
    [...keep.map((i) => t.stops.ids[i]!), 'N1', 'N2', 'N3', 'N4', 'N5'],
    Float64Array.from([...keep.flatMap((i) => [t.stops.lonLat[2 * i]!, t.stops.lonLat[2 * i + 1]!]), 10.05, 48.02, 10.3, 48.2, 10.6, 48.25, 10.9, 48.4, 10.66, 48.05]),
    Float64Array.from([...keep.map((i) => (t.town[i] === 5 ? 1.5 : 1) * t.stops.demand[i]!), 1, 2, 3, 4, 5]),
  );
  const changedDemand = keep.filter((i) => t.town[i] === 5).length;
  let rebalance: { code: number; out: string; err: string };

  beforeAll(async () => {
    writeFileSync(oldCsv, stopsCsv(t.stops));
    writeFileSync(newCsv, stopsCsv(week2));
    const made = await cli(['project', 'new', project]);
    expect(made.code, made.err).toBe(0);
    expect(made.out).toBe(`created project ${project} (project format ${/format (\d+)/.exec(made.out)![1]})\n`);
    const imported = await cli(['project', 'import', project, oldCsv]);
    expect(imported.code, imported.err).toBe(0);
    expect(imported.out).toMatch(new RegExp(`^imported 600 stops from ${oldCsv.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')} into .* as stop set \\d+\\n$`));
    const planned = await cli(['plan', oldCsv, '-k', '6', '--capacity', String(capacity), '--seed', '1', '--restarts', '1', '--threads', '1', '--project', project, '--name', 'week 1']);
    expect(planned.code, planned.err).toBe(0);
    rebalance = await cli(['rebalance', project, '--plan', 'week 1', '--stops', newCsv, '--max-moved', '5%', '--name', 'week 2', '--out', tmp.file('week2.geojson')]);
  }, 60_000);

  it('rebalances within 5% of the demand and prints what changed, as recounted from the saved plans', async () => {
    expect(rebalance.code, rebalance.err).toBe(0);
    const a = await loadPlan(project, 'week 1');
    const b = await loadPlan(project, 'week 2');
    const before = new Map(a.stops.ids.map((id, i) => [id, a.plan.zoneIds[a.plan.assignment[i]!]!]));
    let moved = 0;
    let movedDemand = 0;
    let total2 = 0;
    b.stops.ids.forEach((id, i) => {
      total2 += b.stops.demand[i]!;
      const z = before.get(id);
      if (z !== undefined && z !== b.plan.zoneIds[b.plan.assignment[i]!]) {
        moved++;
        movedDemand += b.stops.demand[i]!;
      }
    });
    expect(moved).toBeGreaterThan(0); // town 5 doubled past the capacity: something had to move
    expect(movedDemand).toBeLessThanOrEqual(0.05 * total2);
    const lines = rebalance.out.split('\n');
    expect(lines[0]).toBe(`stops: 5 new, 4 gone, ${changedDemand} with new demand, 0 moved in place`);
    expect(lines[1]).toBe(`rebalanced week 1 -> week 2: ${moved} stop${moved === 1 ? '' : 's'} changed zone (demand ${amount(movedDemand)}; budget 5.00% of demand)`);
    expect(lines[2]).toBe(`week 1 -> week 2: ${moved} of 596 common stops changed zone (demand ${amount(movedDemand)})`);
    expect(rebalance.out.endsWith(`\nsaved as plan week 2 in ${project}\n`)).toBe(true);
    // Workload per zone before and after, from the saved plans.
    const rows = tableRows(rebalance.out, /^zone\s+stops before\s+stops after\s+demand before\s+demand after$/);
    expect(rows.map((r) => r[0])).toEqual(['1', '2', '3', '4', '5', '6']);
    for (const [zone, sb, sa, db, da] of rows) {
      const j = Number(zone) - 1;
      const count = (p: typeof a, what: 'stops' | 'demand'): number => p.plan.assignment.reduce((s, z, i) => s + (z === j ? (what === 'stops' ? 1 : p.stops.demand[i]!) : 0), 0);
      expect([Number(sb), Number(sa), Number(db), Number(da)]).toEqual([count(a, 'stops'), count(b, 'stops'), count(a, 'demand'), count(b, 'demand')]);
      expect(Number(da)).toBeLessThanOrEqual(capacity);
    }
    // The geojson written has every new stop.
    const gj = JSON.parse(readFileSync(tmp.file('week2.geojson'), 'utf8')) as { features: { properties: Record<string, unknown> }[] };
    const stopIds = new Set(gj.features.map((f) => f.properties.stop_id ?? f.properties.id).filter((x) => x !== undefined));
    for (const id of ['N1', 'N5', week2.ids[0]!]) expect(stopIds.has(id), id).toBe(true);
    // The saved stop set is the new one, and the plan's parent is week 1.
    expect(b.stops.ids).toEqual(readStopsFile(newCsv).ids);
    const plans = await listPlans(project);
    expect(plans.map((p) => [p.name, p.parent, p.stops, p.zones])).toEqual([
      ['week 1', null, 600, 6],
      ['week 2', 'week 1', 601, 6],
    ]);
  });

  it('compare prints the same numbers, and --json agrees with a recount', async () => {
    const text = await cli(['compare', project, 'week 1', 'week 2']);
    expect(text.code, text.err).toBe(0);
    const json = await cli(['compare', project, 'week 1', 'week 2', '--json']);
    expect(json.code, json.err).toBe(0);
    const c = JSON.parse(json.out) as PlanComparison;
    const lines = text.out.split('\n');
    expect(lines[0]).toBe(`week 1 -> week 2: ${c.changedStops} of 596 common stops changed zone (demand ${amount(c.changedDemand)})`);
    expect(lines[1]).toBe(`objective ${c.objectiveBeforeKm2.toExponential(6)} -> ${c.objectiveAfterKm2.toExponential(6)} km²`);
    expect(rebalance.out).toContain(`\n${lines[0]}\n${lines[1]}\n`);
    const a = await loadPlan(project, 'week 1');
    const b = await loadPlan(project, 'week 2');
    expect(c.objectiveBeforeKm2).toBeCloseTo(a.figures.objectiveKm2, 6);
    expect(c.objectiveAfterKm2).toBeCloseTo(b.figures.objectiveKm2, 6);
    // The list of changed stops: every one is in both plans, in other zones.
    const za = new Map(a.stops.ids.map((id, i) => [id, a.plan.zoneIds[a.plan.assignment[i]!]!]));
    const zb = new Map(b.stops.ids.map((id, i) => [id, b.plan.zoneIds[b.plan.assignment[i]!]!]));
    expect(c.changed).toHaveLength(c.changedStops);
    for (const x of c.changed) expect([x.from, x.to]).toEqual([za.get(x.id), zb.get(x.id)]);
    const listed = tableRows(text.out, /^stop\s+from\s+to\s+demand$/);
    expect(listed.map((r) => r[0])).toEqual(c.changed.slice(0, 20).map((x) => x.id));
    if (c.changedStops > 20) expect(text.out).toContain(`... and ${c.changedStops - 20} more (--list N, or --json for all)`);
  });

  it('rebalance --json: the report as JSON, the budget in stops honoured', async () => {
    const r = await cli(['rebalance', project, '--plan', 'week 1', '--stops', newCsv, '--max-moved', '40', '--name', 'week 2b', '--json']);
    expect(r.code, r.err).toBe(0);
    const { saved, report } = JSON.parse(r.out) as { saved: { name: string }; report: RebalanceReport };
    expect(saved.name).toBe('week 2b');
    expect(report.budget).toEqual({ stops: 40 });
    expect(report.moved).toBeLessThanOrEqual(40);
    expect(report).toMatchObject({ added: 5, removedStops: 4, demandChanged: changedDemand, positionChanged: 0, forced: 0, feasible: true });
    expect(report.comparison.changedStops).toBe(report.moved);
  });

  it('a budget too small for the capacity: exit 2, the smallest budget named, nothing saved', async () => {
    const r = await cli(['rebalance', project, '--plan', 'week 1', '--stops', newCsv, '--max-moved', '0', '--name', 'week 2c']);
    expect(r.code).toBe(2);
    expect(r.out).toBe('');
    const m = /^error: the move budget is too small: meeting the zone limits with the new demand needs at least (\d+) stops to change zone; allow that many \(or relax the limits\)\n$/.exec(r.err);
    expect(m, r.err).not.toBeNull();
    expect((await listPlans(project)).map((p) => p.name)).not.toContain('week 2c');
    const ok = await cli(['rebalance', project, '--plan', 'week 1', '--stops', newCsv, '--max-moved', m![1]!, '--name', 'week 2c', '--json']);
    expect(ok.code, ok.err).toBe(0);
    expect((JSON.parse(ok.out) as { report: RebalanceReport }).report.moved).toBeLessThanOrEqual(Number(m![1]));
  });

  for (const [bad, message] of [
    ['-3', /max-moved must be a whole number of stops or a percentage like 5%, got "-3"/],
    ['120%', /max-moved must be a number of stops or a percentage from 0% to 100%, got "120%"/],
    ['2.5', /max-moved must be a whole number of stops or a percentage like 5%, got "2\.5"/],
    ['lots', /max-moved must be a whole number of stops or a percentage like 5%, got "lots"/],
    ['-5%', /max-moved must be a number of stops or a percentage from 0% to 100%, got "-5%"/],
  ] as const) {
    it(`--max-moved ${bad}: exit 2 with a clear message, nothing saved`, async () => {
      const r = await cli(['rebalance', project, '--plan', 'week 1', '--stops', newCsv, `--max-moved=${bad}`, '--name', `bad ${bad}`]);
      expect(r.code).toBe(2);
      expect(r.out).toBe('');
      expect(r.err).toMatch(message);
      expect(r.err).not.toMatch(/internal error|at .*\.ts:\d+/);
      expect((await listPlans(project)).map((p) => p.name)).not.toContain(`bad ${bad}`);
    });
  }

  it('--max-moved -3 as a separate word is refused too (exit 2)', async () => {
    const r = await cli(['rebalance', project, '--plan', 'week 1', '--stops', newCsv, '--max-moved', '-3', '--name', 'bad word']);
    expect(r.code).toBe(2);
    expect(r.out).toBe('');
    expect(r.err).toMatch(/^error: option '--max-moved <n\|p%>' argument '-3' is invalid\. max-moved must be a whole number of stops or a percentage like 5%, got "-3"\n/);
    expect(r.err).not.toMatch(/internal error/);
  });

  it('an unknown plan or a taken name: exit 2, the message names it', async () => {
    const unknown = await cli(['rebalance', project, '--plan', 'week 9', '--stops', newCsv, '--name', 'x']);
    expect(unknown.code).toBe(2);
    expect(unknown.err).toMatch(/week 9/);
    const taken = await cli(['rebalance', project, '--plan', 'week 1', '--stops', newCsv, '--name', 'WEEK 2']);
    expect(taken.code).toBe(2);
    expect(taken.err).toMatch(/already has a plan named "week 2"/);
  });
});
