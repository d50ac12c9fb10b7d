/**
 * tuningfork — umbrella package. Re-exports each pipeline stage under its own name, so one
 * import gives the whole library: `import { core, simulate } from 'tuningfork'`.
 */
import * as core from '@tuningfork/core';
import * as simulate from '@tuningfork/simulate';

export { core, simulate };
