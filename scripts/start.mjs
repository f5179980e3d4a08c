// npm start: the desktop window when Electron's runtime is installed; otherwise (it cannot be
// downloaded on an offline machine) one line saying so, then browser mode (zoneplan serve).
// Electron is found by its files, never by require('electron'): that throws without the
// runtime, and newer versions try to download it first.
import { createRequire } from 'node:module';
import { existsSync, readFileSync, realpathSync } from 'node:fs';
import { spawn } from 'node:child_process';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const require = createRequire(import.meta.url);
const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');

export function findElectronBinary(env = process.env) {
  let dir;
  try {
    dir = path.dirname(require.resolve('electron/package.json'));
  } catch {
    return { ok: false, why: 'the electron package is not installed' };
  }
  const pathTxt = path.join(dir, 'path.txt'); // written only after a successful download
  const distRoot = env.ELECTRON_OVERRIDE_DIST_PATH ?? path.join(dir, 'dist');
  const rel = existsSync(pathTxt) ? readFileSync(pathTxt, 'utf8').trim() : env.ELECTRON_OVERRIDE_DIST_PATH ? 'electron' : null;
  if (!rel) return { ok: false, why: "Electron's runtime is not installed (node_modules/electron/path.txt is missing)" };
  const exe = path.join(distRoot, rel);
  return existsSync(exe) ? { ok: true, exe } : { ok: false, why: `Electron's runtime is missing at ${exe}` };
}

function run(cmd, args) {
  const child = spawn(cmd, args, { stdio: 'inherit', cwd: root });
  for (const sig of ['SIGINT', 'SIGTERM']) process.on(sig, () => child.kill(sig));
  child.on('exit', (code, signal) => process.exit(code ?? (signal ? 0 : 1)));
}

/** Whether this file is the script node was started with (not imported): by real path, so that
 * spaces, non-ASCII names, Windows paths and symbolic links compare as the same file. */
function isMain() {
  if (!process.argv[1]) return false;
  try {
    return realpathSync(process.argv[1]) === realpathSync(fileURLToPath(import.meta.url));
  } catch {
    return false;
  }
}

if (isMain()) {
  const args = process.argv.slice(2).filter((a) => a !== '--browser');
  const found = findElectronBinary();
  if (found.ok && !process.argv.includes('--browser')) run(found.exe, ['.', ...args]);
  else {
    console.error(`[start] ${found.ok ? 'browser mode asked for' : found.why}; starting browser mode instead (open the URL printed below).`);
    run(process.execPath, [path.join(root, 'bin', 'zoneplan.js'), 'serve', '--port', process.env.PORT ?? '0', ...args]);
  }
}
