import path from 'node:path';
import { Command } from 'commander';
import { describe, expect, it } from 'vitest';
import { addServeCommand } from '../../src/cli/serve-command.js';
import { DEMO_PLAN_NAME, DEMO_PROJECT_NAME, ensureDemoProject } from '../../src/api/demo.js';
import { getProjectInfo, listPlans } from '../../src/api/project.js';
import { tempDir } from '../app/helpers.js';

describe('zoneplan serve', () => {
  it('prints the URL with the token on its own line and answers on it until stopped', async () => {
    const dir = tempDir('serve-cli');
    const project = await ensureDemoProject(dir);
    const out: string[] = [];
    const err: string[] = [];
    let stop!: () => void;
    const stopped = new Promise<void>((resolve) => (stop = resolve));
    const program = new Command().exitOverride();
    addServeCommand(program, { out: (s) => out.push(s), err: (s) => err.push(s), isTty: false }, () => stopped);
    const running = program.parseAsync(['serve', '--port', '0', '--project', project], { from: 'user' });
    for (let i = 0; i < 200 && out.length === 0; i++) await new Promise((r) => setTimeout(r, 25));
    expect(out).toHaveLength(1);
    const line = out[0]!;
    expect(line).toMatch(/^http:\/\/127\.0\.0\.1:\d+\/\?token=[A-Za-z0-9_-]+\n$/);
    expect(err.join('')).toContain(DEMO_PROJECT_NAME);
    const url = new URL(line.trim());
    const res = await fetch(`${url.origin}/api/call/mode`, { method: 'POST', headers: { 'x-zoneplan-token': url.searchParams.get('token')! }, body: '{"args":[]}' });
    expect(await res.json()).toEqual({ ok: true, value: 'browser' });
    stop();
    await running;
    await expect(fetch(`${url.origin}/`)).rejects.toThrow();
  });

  it('refuses a port that is not a port', async () => {
    const program = new Command().exitOverride().configureOutput({ writeErr: () => {} });
    addServeCommand(program, { out: () => {}, err: () => {}, isTty: false }, async () => {});
    await expect(program.parseAsync(['serve', '--port', '70000'], { from: 'user' })).rejects.toThrow(/0\.\.65535/);
  });
});

describe('the demo project', () => {
  it('is made once with the demo stops and one solved plan with boundaries', async () => {
    const dir = tempDir('demo');
    const file = await ensureDemoProject(dir);
    expect(path.basename(file)).toBe(DEMO_PROJECT_NAME);
    const info = await getProjectInfo(file);
    expect(info.stopSets).toBe(1);
    const plans = await listPlans(file);
    expect(plans.map((p) => [p.name, p.zones, p.hasBoundaries, p.source])).toEqual([[DEMO_PLAN_NAME, 12, true, 'tallowmere-stops.csv']]);
    expect(await ensureDemoProject(dir)).toBe(file);
    expect((await listPlans(file)).length).toBe(1);
  });
});
