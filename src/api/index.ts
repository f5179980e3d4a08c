export * from './types.js';
export { checkStopsFile, planStopsFile, solveStops, writePlanFiles, zoneRows, planReport, limitsOutcome, type SolvedPlan, type RunHooks } from './plan-file.js';
export { sweepStopsFile, workloadSpread } from './sweep.js';
export { checkReport, lonLatBox } from './report.js';
export { rebalancePlan, comparePlans, type RebalanceOptions } from './rebalance.js';
export {
  createProject,
  openProject,
  getProjectInfo,
  importStopsToProject,
  listStopSets,
  savePlanToProject,
  listPlans,
  loadPlan,
  loadEditedPlan,
  renamePlan,
  appendEdit,
  listEdits,
  checkPlanCanBeSaved,
  planStopsFileToProject,
  exportPlanFromProject,
  settingsLine,
  ProjectHandle,
  type LoadedPlan,
  type SavePlanOptions,
} from './project.js';
export { ProjectError, type ProjectErrorCode } from '../store/errors.js';
