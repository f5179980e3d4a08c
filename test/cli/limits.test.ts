/**
 * The command line with workload limits, depots, locks and sweeps (in process via main()),
 * on the demo stops. Zone files are in test/fixtures/zones/ (see its README).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import Papa from 'papaparse';
import { main, type CliIo } from '../../src/cli/main.js';
import type { PlanReport, SweepReport } from '../../src/api/types.js';

const root = path.resolve(import.meta.dirname, '../..');
const demo = path.join(root, 'demo-data', 'tallowmere-stops.csv');
const zones = (f: string): string => path.join(root, 'test', 'fixtures', 'zones', f);
let work: string;

function capture(): CliIo & { stdout: () => string; stderr: () => string } {
  let out = '';
  let err = '';
  return { out: (s) => (out += s), err: (s) => (err += s), isTty: false, stdout: () => out, stderr: () => err };
}

async function cli(args: string[]): Promise<{ code: number; out: string; err: string }> {
  const io = capture();
  const code = await main(args, io);
  return { code, out: io.stdout(), err: io.stderr() };
}

interface PlanGeoJson {
  features: { geometry: { coordinates: number[] }; properties: Record<string, unknown> }[];
}

beforeAll(() => {
  work = mkdtempSync(path.join(tmpdir(), 'zoneplan-cli-limits-'));
});
afterAll(() => rmSync(work, { recursive: true, force: true }));

/** The demo's stops: id -> [lon, lat, demand]. */
function demoStops(): Map<string, [number, number, number]> {
  const rows = Papa.parse<Record<string, string>>(readFileSync(demo, 'utf8'), { header: true, skipEmptyLines: true }).data;
  return new Map(rows.map((r) => [r.stop_id!, [Number(r.lon), Number(r.lat), Number(r.parcels)]]));
}

describe('zoneplan plan --balance', () => {
  it('prints min, max and use % per zone and a limits line with the LP bound and gap', async () => {
    const { code, out, err } = await cli(['plan', demo, '--zones', '12', '--balance', '5%']);
    expect(code, err).toBe(0);
    expect(out).toMatch(/zone\s+stops\s+demand\s+min\s+max\s+use %\s+mean km\s+max km/);
    // mean 9901 / 12 = 825.08: band 783.8 .. 866.3.
    const rows = out.split('\n').filter((l) => /^\s+\d+\s+\d+\s+\d+\s+783\.8\s+866\.3\s+\d+\.\d\s/.test(l));
    expect(rows).toHaveLength(12);
    for (const row of rows) {
      const [, , demand, , max, use] = row.trim().split(/\s+/).map(Number);
      expect(demand!).toBeGreaterThanOrEqual(783.8);
      expect(demand!).toBeLessThanOrEqual(866.3);
      expect(use!).toBeCloseTo((demand! / max!) * 100, 0);
      expect(row).not.toContain('OVER/UNDER');
    }
    const m = /limits: every zone bound is met; LP lower bound (\d\.\d+e\+\d+) km², gap (\d+\.\d{3})% \((\d+) stops? split by the LP, rounded\)/.exec(out);
    expect(m, out).not.toBeNull();
    const bound = Number(m![1]);
    const gap = Number(m![2]) / 100;
    const objective = Number(/objective (\d\.\d+e\+\d+) km²/.exec(out)![1]);
    expect(bound).toBeLessThanOrEqual(objective);
    expect(gap).toBeCloseTo((objective - bound) / objective, 4);
    expect(gap).toBeGreaterThan(0);
    expect(err).toBe('');
  });
});

describe('zoneplan plan --zones auto', () => {
  it('--capacity 1000 picks 10 zones (9901 / 1000, rounded up) and keeps every zone at most 1000', async () => {
    const { code, out, err } = await cli(['plan', demo, '--zones', 'auto', '--capacity', '1000', '--json']);
    expect(code, err).toBe(0);
    const r = JSON.parse(out) as PlanReport;
    expect(r.zones).toHaveLength(10);
    expect(r.limits!.feasible).toBe(true);
    for (const z of r.zones) {
      expect(z.maxDemand).toBe(1000);
      expect(z.demand).toBeLessThanOrEqual(1000);
    }
    expect(r.zones.reduce((s, z) => s + z.demand, 0)).toBe(9901);
  });

  // Regression: K for 'auto' once came from the uniform --capacity only; DEPOT-VOR carries at
  // most 500, so 10 zones carry 9500 < 9901 and 11 are the fewest that carry the demand.
  it('--capacity 1000 with a depot of capacity 500 picks 11 zones', async () => {
    const { code, out, err } = await cli(['plan', demo, '--zones', 'auto', '--capacity', '1000', '--depots', zones('depots-small-capacity.csv'), '--json']);
    expect(code, err).toBe(0);
    const r = JSON.parse(out) as PlanReport;
    expect(r.zones).toHaveLength(11);
    expect(r.zones[0]!.maxDemand).toBe(500);
  });

  it('without --capacity exits 2 saying so', async () => {
    const { code, err } = await cli(['plan', demo, '--zones', 'auto']);
    expect(code).toBe(2);
    expect(err).toContain("zones 'auto' needs a capacity (--capacity Q)");
  });
});

describe('zoneplan plan --depots', () => {
  let report: PlanReport;
  let text: string;
  beforeAll(async () => {
    const a = await cli(['plan', demo, '--zones', '6', '--depots', zones('depots.csv'), '--json']);
    expect(a.code, a.err).toBe(0);
    report = JSON.parse(a.out) as PlanReport;
    const b = await cli(['plan', demo, '--zones', '6', '--depots', zones('depots.csv')]);
    expect(b.code, b.err).toBe(0);
    text = b.out;
  });

  it('keeps the depot centres exactly at the depot coordinates', () => {
    expect(report.fixedZones).toBe(2);
    const [a, b] = report.zones;
    expect(a!.fixed).toBe(true);
    expect(b!.fixed).toBe(true);
    expect(Math.abs(a!.centre[0] - 10.75)).toBeLessThan(1e-9);
    expect(Math.abs(a!.centre[1] - 48.15)).toBeLessThan(1e-9);
    expect(Math.abs(b!.centre[0] - 9.3)).toBeLessThan(1e-9);
    expect(Math.abs(b!.centre[1] - 48.6)).toBeLessThan(1e-9);
    for (const z of report.zones.slice(2)) expect(z.fixed).toBe(false);
  });

  it("names the depots' zones and applies the depot capacity to its zone only", () => {
    expect(report.zones.map((z) => z.name)).toEqual(['DEPOT-VOR', 'DEPOT-OST', null, null, null, null]);
    expect(report.zones[0]!.maxDemand).toBe(1200);
    expect(report.zones[0]!.demand).toBeLessThanOrEqual(1200);
    expect(report.zones.slice(1).every((z) => z.maxDemand === null)).toBe(true);
    expect(report.limits!.feasible).toBe(true);
    expect(text).toMatch(/zone\s+depot\s+stops\s+demand\s+min\s+max/);
    expect(text).toMatch(/^\s+1\s+DEPOT-VOR\s+\d+\s+\d+\s+-\s+1200\.0\s/m);
    expect(text).toMatch(/^\s+2\s+DEPOT-OST\s+\d+\s+\d+\s+-\s+-\s/m);
    expect(text).toContain('2 zones with a fixed depot, 0 stops locked to a zone');
  });
});

describe('zoneplan plan --locks', () => {
  it('keeps the locked stops in their zones (zone numbers)', async () => {
    const out = path.join(work, 'locks.geojson');
    const { code, err, out: stdout } = await cli(['plan', demo, '--zones', '6', '--locks', zones('locks.csv'), '--out', out, '--json']);
    expect(code, err).toBe(0);
    const r = JSON.parse(stdout) as PlanReport;
    expect(r.lockedStops).toBe(5);
    const plan = JSON.parse(readFileSync(out, 'utf8')) as PlanGeoJson;
    const lockedFeatures = plan.features.filter((f) => f.properties.role === 'stop' && f.properties.locked === true);
    const expected = { 'TC-00500': 3, 'TC-01500': 1, 'TC-02500': 6, 'TC-03500': 2, 'TC-04000': 4 };
    expect(Object.fromEntries(lockedFeatures.map((f) => [f.properties.id, f.properties.zone]))).toEqual(expected);
    // Only those are marked locked.
    expect(plan.features.filter((f) => f.properties.locked !== undefined)).toHaveLength(5);
  });

  it('with depots: locks by depot id or number; depots stay put', async () => {
    const out = path.join(work, 'locks-depots.geojson');
    const { code, err, out: stdout } = await cli(['plan', demo, '--zones', '5', '--depots', zones('depots.csv'), '--locks', zones('locks-depots.csv'), '--out', out, '--json']);
    expect(code, err).toBe(0);
    const r = JSON.parse(stdout) as PlanReport;
    expect(r.lockedStops).toBe(3);
    expect(Math.abs(r.zones[0]!.centre[0] - 10.75)).toBeLessThan(1e-9);
    expect(Math.abs(r.zones[1]!.centre[1] - 48.6)).toBeLessThan(1e-9);
    const plan = JSON.parse(readFileSync(out, 'utf8')) as PlanGeoJson;
    const zoneOf = new Map(plan.features.filter((f) => f.properties.locked === true).map((f) => [f.properties.id, f.properties.zone]));
    // TC-00500 is in Vorford (next to DEPOT-VOR) but locked to DEPOT-OST, zone 2; and the reverse.
    expect(Object.fromEntries(zoneOf)).toEqual({ 'TC-00500': 2, 'TC-01500': 1, 'TC-02500': 4 });
    // Its distance is to the Oststead depot: over 100 km.
    const f = plan.features.find((x) => x.properties.id === 'TC-00500')!;
    expect(f.properties.km as number).toBeGreaterThan(100);
  });
});

describe('zoneplan plan --capacity-file', () => {
  it('sets the capacity of the zones it names; --capacity the others', async () => {
    const { code, err, out } = await cli(['plan', demo, '--zones', '4', '--capacity', '4000', '--capacity-file', zones('capacity.csv'), '--json']);
    expect(code, err).toBe(0);
    const r = JSON.parse(out) as PlanReport;
    expect(r.zones.map((z) => z.maxDemand)).toEqual([900, 4000, 1100, 4000]);
    for (const z of r.zones) expect(z.demand).toBeLessThanOrEqual(z.maxDemand!);
    expect(r.limits!.feasible).toBe(true);
  });
});

describe('zoneplan plan: bad zone files exit 2 naming file, row and field', () => {
  it.each([
    [['--depots', 'bad-depots-negative-capacity.csv'], 'bad-depots-negative-capacity.csv: row 3, field "capacity", value "-5": capacity must not be negative'],
    [['--locks', 'bad-locks-unknown-stop.csv'], 'bad-locks-unknown-stop.csv: row 3, field "stop_id", value "TC-99999": no stop has this id in the stops file'],
    [['--locks', 'bad-locks-unknown-zone.csv'], 'bad-locks-unknown-zone.csv: row 3, field "zone", value "9": the zone must be a zone number 1..6'],
    [['--capacity-file', 'bad-capacity-negative.csv'], 'bad-capacity-negative.csv: row 3, field "capacity", value "-3": capacity must not be negative'],
  ])('%j', async ([option, file], message) => {
    const out = path.join(work, `never-${file}.geojson`);
    const { code, err, out: stdout } = await cli(['plan', demo, '--zones', '6', option!, zones(file!), '--out', out]);
    expect(code).toBe(2);
    expect(err).toContain(`error: ${zones(message.split(':')[0]!)}${message.slice(message.indexOf(':'))}`);
    expect(err).toMatch(/1 error; nothing was imported or written/);
    expect(stdout).toBe('');
    expect(existsSync(out)).toBe(false);
  });

  it('a locks file naming a depot id that is not a zone', async () => {
    const { code, err } = await cli(['plan', demo, '--zones', '3', '--locks', zones('locks-depots.csv')]);
    expect(code).toBe(2);
    expect(err).toContain('row 2, field "zone", value "DEPOT-OST": the zone must be a zone number 1..3');
    expect(err).toContain('locks-depots.csv: 3 errors');
  });
});

describe('zoneplan plan: infeasible limits exit 2 with the numbers', () => {
  it('capacity below the total demand', async () => {
    const out = path.join(work, 'never.geojson');
    const { code, err, out: stdout } = await cli(['plan', demo, '--zones', '6', '--capacity', '1000', '--out', out]);
    expect(code).toBe(2);
    expect(err).toContain('error: total demand 9901 is more than the 6 zones can carry together (6000)');
    expect(stdout).toBe('');
    expect(existsSync(out)).toBe(false);
  });

  // Regression (see test/solve/limits.test.ts): the smallest number of zones at that capacity.
  it('capacity below the total demand names the smallest K (10)', async () => {
    const { code, err } = await cli(['plan', demo, '--zones', '6', '--capacity', '1000']);
    expect(code).toBe(2);
    expect(err).toContain('at least 10 zones');
  });

  it('locked stops over their zone capacity: zone and amount', async () => {
    const { code, err } = await cli(['plan', demo, '--zones', '6', '--capacity', '5000', '--capacity-file', zones('capacity-small-zone-1.csv'), '--locks', zones('locks-ten-in-zone-1.csv')]);
    expect(code).toBe(2);
    expect(err).toContain('error: the stops locked to zone 1 carry 17, 7 over its capacity 10');
  });

  it('a single stop larger than any capacity: its id', async () => {
    // The largest demo stop carries 59 parcels. 200 zones of 58 carry 11 600 together (more than
    // 9901), but none takes that stop.
    const stops = demoStops();
    const [id, [, , w]] = [...stops].reduce((a, b) => (b[1][2] > a[1][2] ? b : a));
    expect(w).toBe(59);
    const { code, err } = await cli(['plan', demo, '--zones', '200', '--capacity', '58']);
    expect(code).toBe(2);
    expect(err).toContain(`error: stop "${id}" has demand 59, more than any zone may carry (largest capacity 58)`);
  });

  it('min stops above the number of stops', async () => {
    const { code, err } = await cli(['plan', demo, '--zones', '10', '--min-stops', '421']);
    expect(code).toBe(2);
    expect(err).toContain('error: 4201 stops, but the zones must hold at least 4210 together (min stops per zone)');
  });
});

describe('zoneplan sweep', () => {
  let text: string;
  let csv: string;
  beforeAll(async () => {
    const file = path.join(work, 'sweep.csv');
    const { code, out, err } = await cli(['sweep', demo, '--zones', '3..6', '--csv', file]);
    expect(code, err).toBe(0);
    text = out;
    csv = readFileSync(file, 'utf8');
  });

  it('prints one row per K', () => {
    expect(text).toMatch(/zones\s+objective km²\s+max\/min demand\s+demand CV\s+mean km\s+max km\s+limits\s+gap %/);
    const rows = text.split('\n').filter((l) => /^\s+\d+\s+\d\.\d{4}e\+\d+\s/.test(l));
    expect(rows.map((l) => Number(l.trim().split(/\s+/)[0]))).toEqual([3, 4, 5, 6]);
    // No limits given: '-' in the limits and gap columns.
    for (const l of rows) expect(l).toMatch(/\s-\s+-$/);
    // More zones, smaller objective.
    const objectives = rows.map((l) => Number(l.trim().split(/\s+/)[1]));
    for (let t = 1; t < objectives.length; t++) expect(objectives[t]!).toBeLessThan(objectives[t - 1]!);
  });

  it('--csv writes a header and 4 rows', () => {
    const lines = csv.trimEnd().split('\n');
    expect(lines[0]).toBe('zones,objective_km2,max_min_demand_ratio,demand_cv,mean_km,max_km,limits_met,gap');
    expect(lines).toHaveLength(5);
    const parsed = Papa.parse<Record<string, string>>(csv, { header: true, skipEmptyLines: true }).data;
    expect(parsed.map((r) => Number(r.zones))).toEqual([3, 4, 5, 6]);
    for (const r of parsed) {
      expect(Number(r.objective_km2)).toBeGreaterThan(0);
      expect(Number(r.max_min_demand_ratio)).toBeGreaterThanOrEqual(1);
      expect(r.limits_met).toBe('');
    }
  });

  it('with --balance: every K meets the band, with a gap, in --json', async () => {
    const { code, out, err } = await cli(['sweep', demo, '--zones', '3..4', '--balance', '5%', '--json']);
    expect(code, err).toBe(0);
    const r = JSON.parse(out) as SweepReport;
    expect(r.rows.map((x) => x.zones)).toEqual([3, 4]);
    for (const row of r.rows) {
      expect(row.feasible).toBe(true);
      expect(row.gap!).toBeGreaterThanOrEqual(0);
      // Within +-5% of the mean: largest / smallest at most 1.05 / 0.95.
      expect(row.maxMinRatio).toBeLessThanOrEqual(1.05 / 0.95 + 1e-9);
    }
  });
});
