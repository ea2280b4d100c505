/**
 * The export-folder watcher (docs/instrument-intake.md): one per site, under the lease
 * 'folder-intake' (server/lib/lease.ts). The lease holder watches every instrument's export
 * folder with chokidar (polling where the intake settings say the folder is a mounted share,
 * where file-system events are not delivered); a file is handed over only once its size has been
 * stable for INTAKE_STABLE_MS (awaitWriteFinish), and taken once per path and content
 * (folder_acquisition's unique key). When the watcher starts it also sees the files already in
 * the folder, so a file that arrived while no server held the lease is taken by the next holder.
 * A process that loses the lease closes its watchers.
 */
import path from 'node:path';
import { watch, type FSWatcher } from 'chokidar';
import type { Knex } from 'knex';
import type { AppConfig } from '../../lib/config';
import type { InstrumentIntakeSettingRow } from '../../lib/db-tables';
import { startJob, type RunningJob } from '../../lib/lease';
import { childLog, safeError } from '../../lib/log';
import { ingestFile, logIngestError, resolveExportFolder } from './service';

const log = childLog('intake');
export const INTAKE_LEASE = 'folder-intake';

interface Watched {
  key: string;
  folder: string;
  watcher: FSWatcher;
}

export interface IntakeJob {
  job: RunningJob;
  /** resolves once every file seen so far has been taken (tests) */
  settle(): Promise<void>;
  stop(): Promise<void>;
}

let current: IntakeJob | null = null;

/** Starts the site's export-folder watcher loop in this process (idempotent). */
export function startIntakeJob(db: Knex, config: AppConfig): IntakeJob {
  if (current) return current;
  const watched = new Map<number, Watched>();
  const queue: { instrumentId: number; abs: string; rel: string }[] = [];

  const closeAll = async () => {
    const all = [...watched.values()];
    watched.clear();
    queue.length = 0;
    await Promise.all(all.map((w) => w.watcher.close()));
  };

  const sync = async () => {
    // every instrument with a folder, in use or not: a file made on a stopped instrument is kept too
    const latest = await db('instrument_intake_setting as s')
      .whereIn('s.id', db('instrument_intake_setting').max('id').groupBy('instrument_id'))
      .whereNotNull('s.export_folder')
      .select<Pick<InstrumentIntakeSettingRow, 'instrument_id' | 'export_folder' | 'use_polling'>[]>(
        's.instrument_id',
        's.export_folder',
        's.use_polling',
      );
    const wanted = new Map<number, { folder: string; polling: boolean }>();
    for (const r of latest) {
      if (r.export_folder === null) continue; // selected whereNotNull: never taken
      try {
        wanted.set(r.instrument_id, { folder: resolveExportFolder(config, r.export_folder), polling: !!r.use_polling });
      } catch (e) {
        log.error({ instrumentId: r.instrument_id, err: safeError(e) }, 'export folder cannot be watched');
      }
    }
    for (const [id, w] of watched) {
      const want = wanted.get(id);
      if (!want || `${want.folder}|${want.polling}` !== w.key) {
        watched.delete(id);
        await w.watcher.close();
      }
    }
    for (const [id, want] of wanted) {
      if (watched.has(id)) continue;
      const watcher = watch(want.folder, {
        ignoreInitial: false,
        usePolling: want.polling,
        interval: config.intakePollMs,
        binaryInterval: config.intakePollMs,
        depth: 4,
        ignored: (p: string) => path.basename(p).startsWith('.'),
        awaitWriteFinish: {
          stabilityThreshold: config.intakeStableMs,
          pollInterval: Math.min(200, config.intakeStableMs),
        },
      });
      const onFile = (abs: string) => {
        queue.push({ instrumentId: id, abs, rel: path.relative(want.folder, abs) });
        void job.tick().then((held) => {
          if (!held) void closeAll();
        });
      };
      watcher.on('add', onFile).on('change', onFile);
      watcher.on('error', (e) => log.error({ instrumentId: id, err: safeError(e) }, 'export folder watcher error'));
      watched.set(id, { key: `${want.folder}|${want.polling}`, folder: want.folder, watcher });
    }
  };

  const drain = async () => {
    while (queue.length) {
      const item = queue.shift()!;
      try {
        await ingestFile(db, config, item.instrumentId, item.abs, item.rel);
      } catch (e) {
        logIngestError(item.instrumentId, item.rel, e);
      }
    }
  };

  const job = startJob(db, {
    name: INTAKE_LEASE,
    intervalMs: config.intakePollMs,
    run: async () => {
      await sync();
      await drain();
    },
  });

  current = {
    job,
    async settle() {
      while (queue.length) await job.tick();
    },
    async stop() {
      current = null;
      await job.stop();
      await closeAll();
    },
  };
  return current;
}

export async function stopIntakeJob(): Promise<void> {
  await current?.stop();
}
