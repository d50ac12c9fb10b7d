// Maps between natural parameters θ and the unconstrained optimisation scale φ.
import type { ParamTransform } from '../choice/model.js';

export interface Transform {
  readonly kind: ParamTransform;
  readonly lo: number;
  readonly hi: number;
}

/** The transform implied by bounds: both finite → scaled logit; one finite → log; none → identity. */
export function transformFor(lo: number, hi: number): Transform {
  if (Number.isFinite(lo) && Number.isFinite(hi)) return { kind: 'logit', lo, hi };
  if (Number.isFinite(lo)) return { kind: 'log', lo, hi };
  if (Number.isFinite(hi)) return { kind: 'neglog', lo, hi };
  return { kind: 'identity', lo, hi };
}

function logistic(x: number): number {
  return x >= 0 ? 1 / (1 + Math.exp(-x)) : Math.exp(x) / (1 + Math.exp(x));
}

export function toNatural(tr: Transform, phi: number): number {
  switch (tr.kind) {
    case 'logit':
      return tr.lo + (tr.hi - tr.lo) * logistic(phi);
    case 'log':
      return tr.lo + Math.exp(phi);
    case 'neglog':
      return tr.hi - Math.exp(phi);
    default:
      return phi;
  }
}

export function toTransformed(tr: Transform, theta: number): number {
  switch (tr.kind) {
    case 'logit': {
      const u = (theta - tr.lo) / (tr.hi - tr.lo);
      return Math.log(u) - Math.log1p(-u);
    }
    case 'log':
      return Math.log(theta - tr.lo);
    case 'neglog':
      return Math.log(tr.hi - theta);
    default:
      return theta;
  }
}

/** dθ/dφ at φ. */
export function jacobian(tr: Transform, phi: number): number {
  switch (tr.kind) {
    case 'logit': {
      const s = logistic(phi);
      return (tr.hi - tr.lo) * s * (1 - s);
    }
    case 'log':
      return Math.exp(phi);
    case 'neglog':
      return -Math.exp(phi);
    default:
      return 1;
  }
}

/**
 * True when θ sits at (or has run off to) a bound: within `relTol` of the range for a bounded
 * parameter, within `relTol` (absolute) of a finite bound otherwise, or beyond 1/relTol in size
 * on an open side (diverging, e.g. a deterministic chooser's β).
 */
export function atBound(tr: Transform, theta: number, relTol: number): boolean {
  if (tr.kind === 'identity') return Math.abs(theta) > 1 / relTol;
  if (tr.kind === 'logit') {
    const w = (tr.hi - tr.lo) * relTol;
    return theta - tr.lo <= w || tr.hi - theta <= w;
  }
  if (tr.kind === 'log') return theta - tr.lo <= relTol || theta - tr.lo >= 1 / relTol;
  return tr.hi - theta <= relTol || tr.hi - theta >= 1 / relTol;
}
