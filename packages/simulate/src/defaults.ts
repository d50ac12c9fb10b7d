import {
  TuningforkError, checkInteger, checkNonNegative, checkPositive, checkRange, resolveOptions,
} from '@tuningfork/core';
import type { CellClass, SimulateOptions } from './types.js';

export const CELL_CLASSES: readonly CellClass[] = Object.freeze(['reward', 'movement', 'mixed', 'action-prediction', 'none']);

/** Defaults of simulateSession (documented on SimulateOptions). */
export const SIMULATE_DEFAULTS: Readonly<Required<SimulateOptions>> = Object.freeze({
  durationSec: 600,
  photometryRate: 1000,
  nSites: 4,
  nUnits: 10,
  siteClasses: CELL_CLASSES,
  unitClasses: CELL_CLASSES,
  responseDff: 0.03,
  shotNoise: 0.003,
  backgroundDff: 0.003,
  artefactSize: 0.05,
  artefactRate: 0.03,
  artefactAtMovement: 0,
  blockTrials: Object.freeze([30, 60]) as readonly [number, number],
  rewardProbs: Object.freeze([0.8, 0.2]) as readonly [number, number],
  bonusRate: 0.03,
  movementRate: 0.08,
  accelRate: 100,
  alpha: 0.3,
  beta: 2.5,
  alphaC: 0.3,
  betaC: 2.5,
  unitBaseRate: Object.freeze([4, 12]) as readonly [number, number],
  unitResponseHz: 15,
  refractorySec: 0.002,
  deviceOffsetSec: 3.25,
  deviceDriftPpm: 40,
  syncDropFraction: 0.02,
  seed: 1,
});

function checkPair(fn: string, name: string, v: unknown, lo: number, hi: number, integer: boolean, ordered = true): readonly [number, number] {
  if (!Array.isArray(v) || v.length !== 2) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${name} must be a pair [min, max], got ${JSON.stringify(v)}.`, { option: name });
  }
  const [a, b] = v as [unknown, unknown];
  if (integer) {
    checkInteger(fn, `${name}[0]`, a, lo, hi);
    checkInteger(fn, `${name}[1]`, b, lo, hi);
  } else {
    checkRange(fn, `${name}[0]`, a, lo, hi);
    checkRange(fn, `${name}[1]`, b, lo, hi);
  }
  if (ordered && (a as number) > (b as number)) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${name} must satisfy min ≤ max, got [${String(a)}, ${String(b)}].`, { option: name });
  }
  return [a as number, b as number];
}

function checkClasses(fn: string, name: string, v: unknown): readonly CellClass[] {
  if (!Array.isArray(v) || v.length === 0) {
    throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${name} must be a non-empty array of classes (${CELL_CLASSES.join(', ')}).`, { option: name });
  }
  v.forEach((c, i) => {
    if (!CELL_CLASSES.includes(c as CellClass)) {
      throw new TuningforkError('TF_BAD_OPTION', `${fn}: ${name}[${i}] is ${JSON.stringify(c)}; expected one of ${CELL_CLASSES.join(', ')}.`, { option: name, index: i });
    }
  });
  return v as CellClass[];
}

/** Merge and validate simulateSession options. @throws TF_UNKNOWN_OPTION, TF_BAD_OPTION */
export function resolveSimulateOptions(options: SimulateOptions | undefined): Required<SimulateOptions> {
  const fn = 'simulateSession';
  const o = resolveOptions(fn, SIMULATE_DEFAULTS, options) as Required<SimulateOptions>;
  checkRange(fn, 'durationSec', o.durationSec, 30, 86400);
  checkRange(fn, 'photometryRate', o.photometryRate, 1, 1000);
  checkInteger(fn, 'nSites', o.nSites, 0, 64);
  checkInteger(fn, 'nUnits', o.nUnits, 0, 2000);
  checkClasses(fn, 'siteClasses', o.siteClasses);
  checkClasses(fn, 'unitClasses', o.unitClasses);
  checkRange(fn, 'responseDff', o.responseDff, 0, 1);
  checkRange(fn, 'shotNoise', o.shotNoise, 0, 1);
  checkRange(fn, 'backgroundDff', o.backgroundDff, 0, 1);
  checkRange(fn, 'artefactSize', o.artefactSize, 0, 0.5);
  checkRange(fn, 'artefactRate', o.artefactRate, 0, 1);
  checkRange(fn, 'artefactAtMovement', o.artefactAtMovement, 0, 1);
  checkPair(fn, 'blockTrials', o.blockTrials, 1, 100000, true);
  checkPair(fn, 'rewardProbs', o.rewardProbs, 0, 1, false, false);
  checkNonNegative(fn, 'bonusRate', o.bonusRate);
  checkRange(fn, 'bonusRate', o.bonusRate, 0, 0.2);
  checkRange(fn, 'movementRate', o.movementRate, 0, 0.5);
  checkRange(fn, 'accelRate', o.accelRate, 20, 2000);
  checkRange(fn, 'alpha', o.alpha, 0, 1);
  checkRange(fn, 'beta', o.beta, 0, 100);
  checkRange(fn, 'alphaC', o.alphaC, 0, 1);
  checkRange(fn, 'betaC', o.betaC, -100, 100);
  checkPair(fn, 'unitBaseRate', o.unitBaseRate, 0, 500, false);
  checkRange(fn, 'unitResponseHz', o.unitResponseHz, 0, 500);
  checkRange(fn, 'refractorySec', o.refractorySec, 0, 0.02);
  checkRange(fn, 'deviceOffsetSec', o.deviceOffsetSec, -1e6, 1e6);
  checkRange(fn, 'deviceDriftPpm', o.deviceDriftPpm, -1000, 1000);
  checkRange(fn, 'syncDropFraction', o.syncDropFraction, 0, 0.5);
  checkInteger(fn, 'seed', o.seed, 0, Number.MAX_SAFE_INTEGER);
  checkPositive(fn, 'durationSec', o.durationSec);
  return o;
}
