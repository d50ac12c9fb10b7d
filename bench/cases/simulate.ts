import { simulateSession } from '@tuningfork/simulate';
import type { BenchCase } from '../harness.js';

export const cases: BenchCase[] = [
  {
    name: 'simulate: 60-min session (4 sites, 40 units)',
    size: '60 min × 1 kHz × 4 sites + 40 units',
    reps: 3,
    targetSec: 3,
    run: () => simulateSession({ durationSec: 3600, photometryRate: 1000, nSites: 4, nUnits: 40, seed: 1 }).session.photometry.length,
  },
];
