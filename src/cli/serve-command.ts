import { InvalidArgumentError, type Command } from 'commander';
import { startBrowserMode } from '../serve/browser-mode.js';
import type { CliIo } from './main.js';

function portOption(v: string): number {
  const n = Number(v);
  if (!(/^\d+$/.test(v.trim()) && Number.isInteger(n) && n >= 0 && n <= 65535)) throw new InvalidArgumentError('the port must be a whole number 0..65535 (0: any free port)');
  return n;
}

/** `zoneplan serve`: browser mode on 127.0.0.1; prints the URL to open (token included) on its own line. */
export function addServeCommand(program: Command, io: CliIo, stopped: () => Promise<void> = untilSignal): void {
  program
    .command('serve')
    .description('browser mode: serve the map window on 127.0.0.1 and print the URL to open (with its one-run token)')
    .option('--port <n>', 'port to listen on (default 0: any free port)', portOption)
    .option('--project <file>', 'project to open (default: the demo project in your data folder, made on first use)')
    .action(async (o: { port?: number; project?: string }) => {
      const app = await startBrowserMode({ ...(o.port !== undefined ? { port: o.port } : {}), ...(o.project !== undefined ? { project: o.project } : {}) });
      io.err(`Zoneplan browser mode: project ${app.session.projectFile}; open this URL in a browser (Ctrl+C stops the server):\n`);
      io.out(`${app.server.url}\n`);
      await stopped();
      await app.stop();
    });
}

function untilSignal(): Promise<void> {
  return new Promise((resolve) => {
    const done = (): void => {
      process.off('SIGINT', done);
      process.off('SIGTERM', done);
      resolve();
    };
    process.on('SIGINT', done);
    process.on('SIGTERM', done);
  });
}
