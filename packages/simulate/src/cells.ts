import type { Rng } from '@tuningfork/core';
import type { CellClass, CellTruth, SimulateOptions } from './types.js';

/** Assign classes (cycled), signs and gains to sites and units. */
export function makeCells(o: Required<SimulateOptions>, rng: Rng): CellTruth[] {
  const cells: CellTruth[] = [];
  const make = (kind: 'site' | 'unit', idx: number, cls: CellClass): CellTruth => {
    const r = rng.stream(idx + (kind === 'unit' ? 100000 : 0));
    const scale = kind === 'site' ? o.responseDff : o.unitResponseHz;
    const g = () => scale * (0.8 + 0.4 * r.uniform());
    // Movement and action-prediction responses are inhibitory in a quarter of the cells.
    const sign: 1 | -1 = cls === 'movement' || cls === 'action-prediction' ? (r.uniform() < 0.25 ? -1 : 1) : 1;
    const carriesReward = cls === 'reward' || cls === 'mixed';
    const carriesMove = cls === 'movement' || cls === 'mixed';
    const base = kind === 'unit' ? o.unitBaseRate[0] + (o.unitBaseRate[1] - o.unitBaseRate[0]) * r.uniform() : NaN;
    return {
      name: kind === 'site' ? `site${String(idx + 1).padStart(2, '0')}` : `unit${String(idx + 1).padStart(3, '0')}`,
      kind, class: cls, sign,
      gainReward: carriesReward ? g() : 0,
      gainMovement: carriesMove ? sign * g() : 0,
      // APE lies in [0, 1] (typically ≈ 0.3), so its kernel gets twice the scale: a typical APE
      // response is then about as large as a typical RPE response.
      gainApe: cls === 'action-prediction' ? 2 * sign * g() : 0,
      baseRate: base,
    };
  };
  for (let i = 0; i < o.nSites; i++) cells.push(make('site', i, o.siteClasses[i % o.siteClasses.length]!));
  for (let i = 0; i < o.nUnits; i++) cells.push(make('unit', i, o.unitClasses[i % o.unitClasses.length]!));
  return cells;
}
