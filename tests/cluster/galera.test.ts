/**
 * Scale-out on a MariaDB Galera cluster (issue 13 item 3), opt-in: `npm run test:cluster`.
 *
 * Starts three Galera nodes on loopback (Debian's mariadb-server and galera-4; data directories
 * owned by the mysql account in a temporary folder, free ports), migrates a database through
 * node 1, and starts two Drumline processes: A on node 1, B on node 3. The concurrency suite
 * (tests/api/concurrency-suite.ts) runs across both; while its uploads are in flight node 3 is
 * killed with SIGKILL, so B answers 503 and the suite's client sends those requests again to A.
 * Then: no duplicate and no missing lot number, every signature once, the audit chain intact,
 * every certificate verifies, every stored file hashes to its record; node 3 restarts, rejoins
 * by incremental state transfer, and holds the same tables as the others (CHECKSUM TABLE).
 * Nothing here uses table locks or GET_LOCK (Galera replicates neither).
 */
import { spawn, execFileSync, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import net, { type AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import knexFactory, { type Knex } from 'knex';
import { dbSettings, knexConfig } from '../../db/config';
import { migrateDatabase } from '../../db/migrate';
import { checkCertificates, checkStoredFiles } from '../../server/ops/record-checks';
import { verifyChain } from '../../server/lib/audit';
import { startServer, stopAll, type ServerProcess } from '../api/server-process';
import { consecutive, runConcurrencySuite } from '../api/concurrency-suite';

const DB = 'drumline_cluster';
const CLUSTER = `drumline_${process.pid}`;

function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = net.createServer();
    s.on('error', reject);
    s.listen(0, '127.0.0.1', () => {
      const p = (s.address() as AddressInfo).port;
      s.close(() => resolve(p));
    });
  });
}

interface Node {
  i: number;
  dir: string;
  sock: string;
  port: number;
  gcomm: number;
  ist: number;
  sst: number;
  proc?: ChildProcess;
}

const root = fs.mkdtempSync(path.join(os.tmpdir(), 'drumline-galera-'));
const nodes: Node[] = [];
let a: ServerProcess;
let b: ServerProcess;
const started = Date.now();

const sql = (n: Node, text: string) =>
  execFileSync('mariadb', ['--no-defaults', `--socket=${n.sock}`, '-uroot', '-N', '-e', text], {
    encoding: 'utf8',
    stdio: ['ignore', 'pipe', 'pipe'],
  });
const status = (n: Node, name: string) => {
  try {
    return sql(n, `SHOW STATUS LIKE '${name}'`).trim().split('\t')[1] ?? '';
  } catch {
    return '';
  }
};

function startNode(n: Node, first: boolean): void {
  const addr = nodes.map((x) => `127.0.0.1:${x.gcomm}`).join(',');
  n.proc = spawn(
    'mariadbd',
    [
      '--no-defaults',
      '--user=mysql',
      `--datadir=${n.dir}/data`,
      `--socket=${n.sock}`,
      `--port=${n.port}`,
      '--bind-address=127.0.0.1',
      `--pid-file=${n.dir}/mysqld.pid`,
      `--log-error=${n.dir}/mysqld.err`,
      '--skip-name-resolve',
      '--max-allowed-packet=64M',
      '--character-set-server=utf8mb4',
      '--collation-server=utf8mb4_unicode_ci',
      '--innodb-buffer-pool-size=128M',
      '--binlog-format=ROW',
      '--default-storage-engine=InnoDB',
      '--innodb-autoinc-lock-mode=2',
      // Galera needs the binary log format ROW; with binary logging on, the owner account may create
      // the protecting triggers only when this is set (or with SUPER, which it must not have).
      '--log-bin-trust-function-creators=1',
      '--wsrep-on=ON',
      '--wsrep-provider=/usr/lib/galera/libgalera_smm.so',
      `--wsrep-cluster-name=${CLUSTER}`,
      `--wsrep-cluster-address=gcomm://${addr}`,
      `--wsrep-node-address=127.0.0.1:${n.gcomm}`,
      `--wsrep-provider-options=gmcast.listen_addr=tcp://127.0.0.1:${n.gcomm};ist.recv_addr=127.0.0.1:${n.ist}`,
      '--wsrep-sst-method=rsync',
      `--wsrep-sst-receive-address=127.0.0.1:${n.sst}`,
      ...(first ? ['--wsrep-new-cluster'] : []),
    ],
    { stdio: 'ignore', detached: false },
  );
}

async function waitSynced(n: Node, timeoutMs = 120_000): Promise<void> {
  const t0 = Date.now();
  while (Date.now() - t0 < timeoutMs) {
    if (status(n, 'wsrep_local_state_comment') === 'Synced') return;
    await new Promise((r) => setTimeout(r, 500));
  }
  throw new Error(`node ${n.i} did not reach Synced:\n${fs.readFileSync(`${n.dir}/mysqld.err`, 'utf8').slice(-2000)}`);
}

const knexOn = (n: Node, kind: 'owner' | 'runtime'): Knex =>
  knexFactory(knexConfig({ ...dbSettings(kind, DB), port: n.port }, { min: 0, max: 4 }));

beforeAll(async () => {
  fs.chmodSync(root, 0o755);
  for (let i = 1; i <= 3; i++) {
    const dir = path.join(root, `node${i}`);
    fs.mkdirSync(dir);
    nodes.push({
      i,
      dir,
      sock: path.join(dir, 'mysqld.sock'),
      port: await freePort(),
      gcomm: await freePort(),
      ist: await freePort(),
      sst: await freePort(),
    });
    execFileSync('mariadb-install-db', ['--no-defaults', '--user=mysql', `--datadir=${dir}/data`, '--skip-test-db'], {
      stdio: 'ignore',
    });
    execFileSync('chown', ['-R', 'mysql:mysql', dir]);
  }
  startNode(nodes[0], true);
  await waitSynced(nodes[0]);
  for (const n of nodes.slice(1)) {
    startNode(n, false);
    await waitSynced(n);
  }
  expect(status(nodes[0], 'wsrep_cluster_size')).toBe('3');
  const owner = dbSettings('owner');
  const rt = dbSettings('runtime');
  sql(
    nodes[0],
    `CREATE DATABASE ${DB} CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci;
     CREATE USER '${owner.user}'@'127.0.0.1' IDENTIFIED BY '${owner.password}';
     CREATE USER '${rt.user}'@'127.0.0.1' IDENTIFIED BY '${rt.password}';
     GRANT ALL PRIVILEGES ON \`drumline%\`.* TO '${owner.user}'@'127.0.0.1' WITH GRANT OPTION;`,
  );
  process.env.DRUMLINE_DB_PORT = String(nodes[0].port);
  await migrateDatabase(DB);
  a = await startServer({ DRUMLINE_DB_PORT: String(nodes[0].port) }, DB);
  b = await startServer({ DRUMLINE_DB_PORT: String(nodes[2].port) }, DB);
  console.log(
    `[cluster] three nodes synced, migrated, two servers up after ${Math.round((Date.now() - started) / 1000)} s`,
  );
}, 600_000);

afterAll(async () => {
  await stopAll();
  for (const n of nodes) {
    try {
      execFileSync('mariadb-admin', ['--no-defaults', `--socket=${n.sock}`, '-uroot', 'shutdown'], { stdio: 'ignore' });
    } catch {
      n.proc?.kill('SIGKILL');
    }
  }
  await new Promise((r) => setTimeout(r, 1000));
  fs.rmSync(root, { recursive: true, force: true });
  console.log(`[cluster] total ${Math.round((Date.now() - started) / 1000)} s`);
}, 120_000);

describe('Drumline on a three-node Galera cluster', () => {
  it('keeps every record whole across two servers and a node killed mid-run', async () => {
    const owner = knexOn(nodes[0], 'owner');
    const rt = knexOn(nodes[0], 'runtime');
    try {
      let killedAt = 0;
      const r = await runConcurrencySuite({
        urls: [a.url, b.url],
        rt,
        owner,
        tries: 4,
        midRun: async () => {
          nodes[2].proc!.kill('SIGKILL');
          killedAt = Date.now();
        },
      });
      expect(killedAt).toBeGreaterThan(0);
      console.log(
        `[cluster] node 3 killed mid-run; ${r.retried503} requests answered 503 by its server and ${r.retriedReset} had their connection closed mid-upload, all sent again; ` +
          `certificates pending after verification: ${r.pendingCertificates}`,
      );
      expect(consecutive(r.lotNumbers)).toBe(true);
      const chain = await verifyChain(rt);
      expect(chain.ok, JSON.stringify(chain)).toBe(true);
      expect((await checkCertificates(rt)).problems).toEqual([]);
      expect((await checkStoredFiles(rt)).problems).toEqual([]);
      // Galera's auto-increment step: ids are not consecutive, numbers still are.
      expect(Number(sql(nodes[0], 'SELECT @@auto_increment_increment').trim())).toBeGreaterThan(1);

      // Node 3 rejoins and holds the same records as the others.
      startNode(nodes[2], false);
      await waitSynced(nodes[2]);
      const tables = [
        'audit_event',
        'audit_head',
        'lot',
        'container',
        'measurement',
        'stored_file',
        'certificate',
        'e_signature',
      ];
      const sums = nodes.map((n) => sql(n, `CHECKSUM TABLE ${tables.map((t) => `${DB}.${t}`).join(', ')}`));
      expect(sums[1]).toBe(sums[0]);
      expect(sums[2]).toBe(sums[0]);
    } finally {
      await rt.destroy();
      await owner.destroy();
    }
  }, 600_000);
});
