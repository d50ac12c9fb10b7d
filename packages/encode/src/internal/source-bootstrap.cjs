// Worker entry used only when poissonGLMCV runs from TypeScript sources (tests,
// `tsx --conditions=@tuningfork/source`): registers tsx's ESM loader in the worker, then imports the
// .ts worker module. Built packages (dist/) start dist/glm/poisson-worker.js directly.
const { workerData } = require('node:worker_threads');

import(workerData.loader).then((api) => {
  api.register();
  return import(workerData.entry);
});
