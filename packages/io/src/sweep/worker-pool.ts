import { Worker } from 'node:worker_threads';
import type { AnalysisSettings } from '../analysis/analyze-file.js';
import { builtModule } from '../threads/built-module.js';
import type { SweepOutcome, SweepTask } from './analyze-task.js';

/**
 * Runs the tasks on `jobs` worker threads, each analysing one capture at a
 * time; `onOutcome` is called on the main thread as each finishes (in the
 * order they finish). Resolves when all are done.
 * @throws Error when a worker dies (a bug, not a bad capture: those are rows)
 */
export function runOnWorkers(
  tasks: readonly SweepTask[],
  jobs: number,
  settings: AnalysisSettings,
  onOutcome: (o: SweepOutcome) => void,
): Promise<void> {
  if (tasks.length === 0) return Promise.resolve();
  return new Promise((resolvePool, rejectPool) => {
    let next = 0;
    let finished = 0;
    let failed = false;
    const workers: Worker[] = [];
    const stopped = new Set<Worker>();
    const stop = (w: Worker) => {
      stopped.add(w);
      void w.terminate();
    };
    const stopAll = () => {
      for (const w of workers) stop(w);
    };
    const feed = (w: Worker) => {
      if (next < tasks.length) w.postMessage(tasks[next++]);
      else stop(w);
    };
    const count = Math.min(jobs, tasks.length);
    for (let i = 0; i < count; i++) {
      const w = new Worker(builtModule('sweep/worker.js'), { workerData: { settings } });
      workers.push(w);
      w.on('message', (o: SweepOutcome) => {
        if (failed) return;
        try {
          onOutcome(o);
        } catch (e) {
          failed = true;
          stopAll();
          rejectPool(e);
          return;
        }
        finished++;
        if (finished === tasks.length) {
          stopAll();
          resolvePool();
        } else feed(w);
      });
      w.on('error', (e) => {
        if (failed) return;
        failed = true;
        stopAll();
        rejectPool(e);
      });
      // A worker that ends without being told to (out of memory, say) would leave its task unanswered.
      w.on('exit', (code) => {
        if (failed || stopped.has(w)) return;
        failed = true;
        stopAll();
        rejectPool(new Error(`sweep: a worker thread exited with code ${code} before finishing its capture`));
      });
      feed(w);
    }
  });
}
