import { writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { createProject } from '../../src/api/project.js';
import type { AppSession } from '../../src/api/session.js';
import { API_METHODS } from '../../src/api/wire.js';
import { CHANGED_CHANNEL, EVENTS_GLOBAL, channelOf, type AppChange } from '../../src/desktop/channels.js';
import { startDesktop } from '../../src/desktop/desktop-app.js';
import { cleanChange, exposeApi, preloadEvents } from '../../src/desktop/preload-api.js';
import { stopsCsv, tempDir } from '../app/helpers.js';
import { fakeElectron, FakeIpcRenderer, FakeWindow } from './stand-in.js';

/** An IpcRendererEvent as Electron passes it: the sender and ports must never reach the page. */
const IPC_EVENT = { sender: { send: () => {} }, senderId: 0, ports: [] };

/** Lets every promise chain that is already settled run to its end. */
const settle = (): Promise<void> => new Promise((r) => setImmediate(r));

describe('preload: the window\'s subscription to menu changes', () => {
  it('is exposed as window.zoneplanEvents with onChanged only, on its own channel', () => {
    const exposed: Record<string, Record<string, unknown>> = {};
    exposeApi({ exposeInMainWorld: (key, api) => (exposed[key] = api) }, new FakeIpcRenderer());
    expect(EVENTS_GLOBAL).toBe('zoneplanEvents');
    expect(Object.keys(exposed[EVENTS_GLOBAL]!)).toEqual(['onChanged']);
    expect(Object.isFrozen(exposed[EVENTS_GLOBAL])).toBe(true);
    expect(CHANGED_CHANNEL).toBe('zoneplan:changed');
    expect(API_METHODS.map(channelOf)).not.toContain(CHANGED_CHANNEL);
  });

  it('hands the listener the change alone: no IpcRendererEvent, no extra fields', () => {
    const ipc = new FakeIpcRenderer();
    const got: unknown[][] = [];
    preloadEvents(ipc).onChanged((...args: unknown[]) => got.push(args));
    ipc.emit(CHANGED_CHANNEL, IPC_EVENT, { what: 'project', file: '/p/a.zoneplan', sender: IPC_EVENT.sender });
    ipc.emit(CHANGED_CHANNEL, IPC_EVENT, { what: 'stops', stopSet: 3 });
    expect(got).toEqual([[{ what: 'project', file: '/p/a.zoneplan' }], [{ what: 'stops', stopSet: 3 }]]);
    for (const [change] of got) expect(Object.values(change as object)).not.toContain(IPC_EVENT.sender);
  });

  it('drops what is not a change, and messages on other channels', () => {
    const ipc = new FakeIpcRenderer();
    const got: AppChange[] = [];
    preloadEvents(ipc).onChanged((c) => got.push(c));
    for (const bad of [undefined, null, 'project', {}, { what: 'project' }, { what: 'project', file: 3 }, { what: 'stops', stopSet: '3' }, { what: 'stops', stopSet: 1.5 }, { what: 'reload' }]) ipc.emit(CHANGED_CHANNEL, IPC_EVENT, bad);
    ipc.emit('zoneplan:project', IPC_EVENT, { what: 'project', file: '/p/a.zoneplan' });
    expect(got).toEqual([]);
    expect(cleanChange({ what: 'stops', stopSet: 2, extra: true })).toEqual({ what: 'stops', stopSet: 2 });
  });

  it('ends a subscription with the function it returns, and takes functions only', () => {
    const ipc = new FakeIpcRenderer();
    const events = preloadEvents(ipc);
    const got: AppChange[] = [];
    const stop = events.onChanged((c) => got.push(c));
    expect(ipc.listeners.get(CHANGED_CHANNEL)).toHaveLength(1);
    stop();
    expect(ipc.listeners.get(CHANGED_CHANNEL)).toHaveLength(0);
    ipc.emit(CHANGED_CHANNEL, IPC_EVENT, { what: 'stops', stopSet: 1 });
    expect(got).toEqual([]);
    expect(() => events.onChanged('alert(1)' as unknown as (c: AppChange) => void)).toThrow(TypeError);
    expect(ipc.listeners.get(CHANGED_CHANNEL)).toHaveLength(0);
  });
});

describe('menu commands: the window is told what changed and is never reloaded', () => {
  let session: AppSession;
  let win: FakeWindow;
  let dir: string;
  const e = fakeElectron(tempDir('userdata'));

  const fileItem = (label: string) => e.menus.at(-1)!.find((m) => m.label === 'File')!.submenu!.find((i) => i.label === label)!;
  const click = (label: string): void => fileItem(label).click!();
  const sent = (): unknown[][] => win.webContents.sent;

  beforeAll(async () => {
    dir = tempDir('menu');
    const first = path.join(dir, 'first.zoneplan');
    await createProject(first);
    FakeWindow.created.length = 0;
    ({ session } = await startDesktop(e, { distDir: '/opt/zoneplan/dist', project: first, log: () => {} }));
    win = FakeWindow.created[0]!;
  });

  afterAll(async () => {
    await session.close();
  });

  it('Open Project: opens the chosen project and sends {what: project, file}', async () => {
    const other = path.join(dir, 'other.zoneplan');
    await createProject(other);
    e.dialogs.open.push({ canceled: false, filePaths: [other] });
    click('Open Project…');
    await vi.waitFor(() => expect(sent()).toHaveLength(1));
    expect(sent()[0]).toEqual([CHANGED_CHANNEL, { what: 'project', file: other }]);
    expect((await session.project()).file).toBe(other);
    expect(win.webContents.reloads).toBe(0);
    expect(e.dialogs.errors).toEqual([]);
    // The recent list in the menu is rebuilt with it first.
    expect(fileItem('Open Recent').submenu![0]!.label).toMatch(/^other\.zoneplan — /);
  });

  it('Open Recent: opens that project and sends the same event', async () => {
    sent().length = 0;
    fileItem('Open Recent').submenu!.find((i) => i.label?.startsWith('first.zoneplan'))!.click!();
    await vi.waitFor(() => expect(sent()).toHaveLength(1));
    expect(sent()[0]).toEqual([CHANGED_CHANNEL, { what: 'project', file: path.join(dir, 'first.zoneplan') }]);
    expect(win.webContents.reloads).toBe(0);
  });

  it('New Project: makes the project, opens it and sends {what: project, file}', async () => {
    sent().length = 0;
    const made = path.join(dir, 'made.zoneplan');
    e.dialogs.save.push({ canceled: false, filePath: made });
    click('New Project…');
    await vi.waitFor(() => expect(sent()).toHaveLength(1));
    expect(sent()[0]).toEqual([CHANGED_CHANNEL, { what: 'project', file: made }]);
    const p = await session.project();
    expect(p.file).toBe(made);
    expect(p.stopSets).toEqual([]);
    expect(win.webContents.reloads).toBe(0);
  });

  it('Import Stops: imports into the open project and sends {what: stops, stopSet}', async () => {
    sent().length = 0;
    const csv = path.join(dir, 'stops.csv');
    writeFileSync(csv, stopsCsv(40));
    e.dialogs.open.push({ canceled: false, filePaths: [csv] });
    click('Import Stops…');
    await vi.waitFor(() => expect(sent()).toHaveLength(1));
    const sets = (await session.project()).stopSets;
    expect(sets).toHaveLength(1);
    expect(sets[0]!.stops).toBe(40);
    expect(sent()[0]).toEqual([CHANGED_CHANNEL, { what: 'stops', stopSet: sets[0]!.id }]);
    expect(win.webContents.reloads).toBe(0);
    // What the main side sends reaches the page through the preload as it was sent.
    const ipc = new FakeIpcRenderer();
    const got: AppChange[] = [];
    preloadEvents(ipc).onChanged((c) => got.push(c));
    const [channel, ...args] = sent()[0]!;
    ipc.emit(channel as string, IPC_EVENT, ...args);
    expect(got).toEqual([{ what: 'stops', stopSet: sets[0]!.id }]);
  });

  it('sends nothing for a cancelled dialog or a refused import, and nothing to a closed window', async () => {
    sent().length = 0;
    e.dialogs.open.push({ canceled: true, filePaths: [] });
    click('Open Project…');
    e.dialogs.save.push({ canceled: true });
    click('New Project…');
    await vi.waitFor(() => expect(e.dialogs.open.length + e.dialogs.save.length).toBe(0));
    await settle();
    const bad = path.join(dir, 'bad.csv');
    writeFileSync(bad, 'id,lat,lon\na,95,10\n');
    e.dialogs.open.push({ canceled: false, filePaths: [bad] });
    click('Import Stops…');
    await vi.waitFor(() => expect(e.dialogs.errors).toHaveLength(1));
    expect(e.dialogs.errors[0]![0]).toMatch(/^Nothing was imported: 1 problem in bad\.csv/);
    expect((await session.project()).stopSets).toHaveLength(1);

    win.destroyed = true;
    const csv = path.join(dir, 'more.csv');
    writeFileSync(csv, stopsCsv(10, 3));
    e.dialogs.open.push({ canceled: false, filePaths: [csv] });
    click('Import Stops…');
    await vi.waitFor(async () => expect((await session.project()).stopSets).toHaveLength(2));
    await settle();
    expect(e.dialogs.errors).toHaveLength(1);
    expect(sent()).toEqual([]);
    expect(win.webContents.reloads).toBe(0);
  });
});
