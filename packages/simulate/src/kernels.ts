/**
 * Unit-size response kernels of the simulated cells, as functions of time since the event (s).
 * Shapes are our own smooth choices: an alpha function for outcome and choice responses, and a
 * Gaussian bump that begins before the onset for movement.
 */
export const KERNEL_SPAN = Object.freeze({ fromSec: -1, toSec: 3 });

/** Outcome response per unit RPE: alpha function peaking at 0.3 s. */
export function rewardKernel(t: number): number {
  if (t <= 0) return 0;
  const u = t / 0.3;
  return u * Math.exp(1 - u);
}

/** Movement response per unit vigour: Gaussian bump centred 0.1 s after onset, sd 0.15 s. */
export function movementKernel(t: number): number {
  if (t < -0.6 || t > 0.8) return 0;
  const u = (t - 0.1) / 0.15;
  return Math.exp(-0.5 * u * u);
}

/** Choice response per unit APE: alpha function peaking 0.2 s after the port entry. */
export function apeKernel(t: number): number {
  if (t <= 0) return 0;
  const u = t / 0.2;
  return u * Math.exp(1 - u);
}

/** Support of each kernel (s): outside it the kernel is below 1e-9 of its peak (or exactly 0). */
export const KERNEL_SUPPORT = Object.freeze({
  reward: [0, 3] as const,
  movement: [-0.6, 0.8] as const,
  ape: [0, 2] as const,
});

/**
 * Add Σ_e weight_e · kernel(t − t_e) to `out`, a grid at `rate` Hz starting at t = 0, over each
 * kernel's support. Times are computed as i / rate, never accumulated.
 */
export function addKernelTrain(
  out: Float64Array, rate: number, times: Float64Array, weights: Float64Array,
  kernel: (t: number) => number, support: readonly [number, number],
): void {
  const n = out.length;
  for (let e = 0; e < times.length; e++) {
    const te = times[e]!;
    const w = weights[e]!;
    if (w === 0) continue;
    const i0 = Math.max(0, Math.ceil((te + support[0]) * rate));
    const i1 = Math.min(n - 1, Math.floor((te + support[1]) * rate));
    for (let i = i0; i <= i1; i++) out[i] = out[i]! + w * kernel(i / rate - te);
  }
}
