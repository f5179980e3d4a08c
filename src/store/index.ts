export { ProjectStore, planName } from './project-store.js';
export type { StoredStopSet, StoredPlanInfo, StoredPlan, PlanToSave, SavePlanOptions, EditKind, EditToAdd, StoredEdit, ProjectSummary } from './types.js';
export { ProjectError, type ProjectErrorCode } from './errors.js';
export { APPLICATION_ID, SCHEMA_VERSION, MIGRATIONS, migrate } from './schema.js';
export { lockHolder, lockPathOf, lockedError, type LockOwner } from './lock.js';
export type { RunSummary, ZoneStats } from './rows.js';
