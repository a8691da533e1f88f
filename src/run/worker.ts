/**
 * Worker-thread entry of `slabbench sweep --jobs N`. Receives RunTask messages, answers TaskDone.
 * workerData.depsModule names the module with the real loader/solver (real-deps) or a test double.
 */
import { parentPort, workerData } from 'node:worker_threads';
import type { RunDeps } from './deps.js';
import { executeTask, type RunTask, type TaskCache } from './run-task.js';

const port = parentPort;
if (port) {
  const data = workerData as { depsModule: string };
  const deps = (await import(data.depsModule)) as RunDeps;
  const cache: TaskCache = {};
  // Tasks are sent one at a time (the next only after this one answered), so no queue is needed here.
  port.on('message', (task: RunTask) => {
    void executeTask(task, deps, cache).then((done) => port.postMessage(done));
  });
  port.postMessage({ ready: true });
}
