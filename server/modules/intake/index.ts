/** What the composition root uses of export-folder intake (docs/instrument-intake.md): its routes and the folder watcher job. */
export { intakeRoutes } from './routes';
export { startIntakeJob } from './watcher';
export { resolveExportFolder } from './service';
