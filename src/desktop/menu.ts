import path from 'node:path';
import type { MenuItemOptionsLike } from './electron-like.js';

export interface MenuActions {
  newProject(): void;
  openProject(file?: string): void;
  importStops(): void;
  exportPlan(): void;
  quit(): void;
}

/** The application menu: projects, import and export, quit; and the usual edit and view items. */
export function menuTemplate(actions: MenuActions, recent: readonly string[]): MenuItemOptionsLike[] {
  const recentItems: MenuItemOptionsLike[] =
    recent.length > 0 ? recent.map((f) => ({ label: `${path.basename(f)} — ${path.dirname(f)}`, click: () => actions.openProject(f) })) : [{ label: 'No recent projects', enabled: false }];
  return [
    {
      label: 'File',
      submenu: [
        { label: 'New Project…', accelerator: 'CmdOrCtrl+N', click: () => actions.newProject() },
        { label: 'Open Project…', accelerator: 'CmdOrCtrl+O', click: () => actions.openProject() },
        { label: 'Open Recent', type: 'submenu', submenu: recentItems },
        { type: 'separator' },
        { label: 'Import Stops…', accelerator: 'CmdOrCtrl+I', click: () => actions.importStops() },
        { label: 'Export Plan…', accelerator: 'CmdOrCtrl+E', click: () => actions.exportPlan() },
        { type: 'separator' },
        { label: 'Quit', accelerator: 'CmdOrCtrl+Q', click: () => actions.quit() },
      ],
    },
    { label: 'Edit', submenu: [{ role: 'cut' }, { role: 'copy' }, { role: 'paste' }, { role: 'selectAll' }] },
    { label: 'View', submenu: [{ role: 'reload' }, { role: 'resetZoom' }, { role: 'zoomIn' }, { role: 'zoomOut' }, { type: 'separator' }, { role: 'togglefullscreen' }] },
  ];
}
