/**
 * Starts browser mode as the user would (`node bin/zoneplan.js serve --port 0`) on a fresh data
 * folder, so that the server makes the bundled demo project there on first use, and reads the
 * URL (token included) from the line it prints on stdout. The specs find it in ZONEPLAN_E2E_URL.
 */
import { spawn } from 'node:child_process';
import { mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';

export default async function globalSetup(): Promise<() => Promise<void>> {
  const dataDir = mkdtempSync(path.join(tmpdir(), 'zoneplan-e2e-'));
  mkdirSync('test-results/screenshots', { recursive: true });
  const child = spawn(process.execPath, ['bin/zoneplan.js', 'serve', '--port', '0'], {
    env: { ...process.env, ZONEPLAN_DATA_DIR: dataDir },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  // If the test runner dies without its teardown, do not leave the server behind.
  const killChild = (): void => void child.kill('SIGTERM');
  process.once('exit', killChild);
  let stderr = '';
  child.stderr.on('data', (b: Buffer) => (stderr += b.toString()));
  const url = await new Promise<string>((resolve, reject) => {
    let out = '';
    const timer = setTimeout(() => reject(new Error(`zoneplan serve printed no URL within 60 s.\nstdout: ${out}\nstderr: ${stderr}`)), 60_000);
    child.stdout.on('data', (b: Buffer) => {
      out += b.toString();
      const line = out.split('\n').find((l) => /^http:\/\/127\.0\.0\.1:\d+\/\?token=\S+$/.test(l.trim()));
      if (line) {
        clearTimeout(timer);
        resolve(line.trim());
      }
    });
    child.on('exit', (code) => {
      clearTimeout(timer);
      reject(new Error(`zoneplan serve exited (${code}) before printing its URL.\nstdout: ${out}\nstderr: ${stderr}`));
    });
  });
  process.env['ZONEPLAN_E2E_URL'] = url;
  process.env['ZONEPLAN_E2E_DATA'] = dataDir;
  return async () => {
    process.off('exit', killChild);
    child.kill('SIGTERM');
    await new Promise<void>((resolve) => {
      const t = setTimeout(() => {
        child.kill('SIGKILL');
        resolve();
      }, 5000);
      child.once('exit', () => {
        clearTimeout(t);
        resolve();
      });
    });
    rmSync(dataDir, { recursive: true, force: true });
  };
}
