/**
 * Entry of a sweep worker thread: receives tasks, answers each with its
 * outcome. `workerData.settings` holds the sweep's analysis settings.
 */
import { parentPort, workerData } from 'node:worker_threads';
import type { AnalysisSettings } from '../analysis/analyze-file.js';
import { runSweepTask, type SweepTask } from './analyze-task.js';

const settings = (workerData as { settings: AnalysisSettings }).settings;
parentPort?.on('message', (task: SweepTask) => parentPort?.postMessage(runSweepTask(task, settings)));
