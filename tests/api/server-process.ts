/**
 * Drumline server processes for the tests that need real, separate processes (two app servers on
 * one database, graceful shutdown): `node --import tsx server/index.ts` on a free loopback port,
 * against the run's test database, each with its own logs kept in memory. Every process started
 * here is stopped by stopAll() (call it in afterAll).
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { createRequire } from 'node:module';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { repoRoot } from '../../db/config';
import { TEST_DB } from './db-name';

export interface ServerProcess {
  child: ChildProcess;
  port: number;
  url: string;
  /** Everything the process wrote to stdout (JSON log lines) and stderr. */
  output: () => string;
  stop: (signal?: NodeJS.Signals) => Promise<number | null>;
}

const started = new Set<ServerProcess>();

export async function startServer(env: Record<string, string> = {}, database = TEST_DB): Promise<ServerProcess> {
  const tsx = pathToFileURL(createRequire(import.meta.url).resolve('tsx')).href;
  const child = spawn(process.execPath, ['--import', tsx, path.join(repoRoot, 'server', 'index.ts')], {
    cwd: repoRoot,
    env: {
      ...process.env,
      VITEST: '',
      DRUMLINE_DB_NAME: database,
      PORT: '0',
      HOST: '127.0.0.1',
      DRUMLINE_ANNOUNCE_PORT: '1',
      SIGNIN_RATE_LIMIT: '10000',
      INTEGRITY_SWEEP_HOURS: '0',
      LOG_LEVEL: 'info',
      WORKER_THREADS: '1',
      ...env,
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let out = '';
  child.stdout!.on('data', (d: Buffer) => (out += d.toString()));
  child.stderr!.on('data', (d: Buffer) => (out += d.toString()));
  const port = await new Promise<number>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`server did not start in 60 s:\n${out}`)), 60_000);
    const onData = () => {
      const m = /DRUMLINE_LISTENING (\d+)/.exec(out);
      if (m) {
        clearTimeout(timer);
        child.stdout!.off('data', onData);
        resolve(Number(m[1]));
      }
    };
    child.stdout!.on('data', onData);
    child.once('exit', (code) => {
      clearTimeout(timer);
      reject(new Error(`server exited with ${code} before listening:\n${out}`));
    });
  });
  const exited = new Promise<number | null>((resolve) => {
    if (child.exitCode !== null) resolve(child.exitCode);
    else child.once('exit', (code) => resolve(code));
  });
  const proc: ServerProcess = {
    child,
    port,
    url: `http://127.0.0.1:${port}`,
    output: () => out,
    async stop(signal = 'SIGTERM') {
      if (child.exitCode === null && child.signalCode === null) child.kill(signal);
      const code = await exited;
      started.delete(proc);
      return code;
    },
  };
  started.add(proc);
  return proc;
}

export async function stopAll(): Promise<void> {
  await Promise.all([...started].map((p) => p.stop('SIGKILL')));
}
