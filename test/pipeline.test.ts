import { describe, expect, it } from 'vitest';
import { sha256Typed } from '@tuningfork/core';
import { simulateSession } from '@tuningfork/simulate';
import { correlation } from '@tuningfork/test-utils';
import { analyzeSession } from 'tuningfork';
import type { SessionAnalysis } from 'tuningfork';

// A short session of the demo task: 2 sites and 3 units, 15 minutes.
const sim = simulateSession({ durationSec: 900, nSites: 2, nUnits: 3, siteClasses: ['reward', 'movement'], unitClasses: ['reward', 'movement', 'none'], seed: 4 });
const quick = { seed: 3, encode: { model: { null: { nShifts: 200 } } } } as const;

function tableHashes(a: SessionAnalysis): Record<string, string> {
  const out: Record<string, string> = {};
  for (const [name, t] of Object.entries(a.outputs.tables)) {
    for (const [col, v] of Object.entries(t.columns)) {
      out[`${name}.${col}`] = Array.isArray(v) ? v.join('\u0001') : sha256Typed(v as Float64Array);
    }
  }
  return out;
}

describe('analyzeSession', () => {
  const steps: string[] = [];
  const first = analyzeSession(sim.session, quick, { onProgress: (s, f) => { if (f === 1 && !steps.includes(s)) steps.push(s); } });

  it('runs every step, reports progress and returns each intermediate result', async () => {
    const a = await first;
    expect(steps).toEqual(['condition', 'qc', 'movement', 'learning', 'peri_event', 'bootstrap', 'encode', 'outputs']);
    expect(a.sites.map((s) => s.name)).toEqual(['site01', 'site02']);
    expect(a.movement.source).toBe('detected');
    expect(a.learning?.fit.paramNames).toEqual(['alpha', 'beta', 'alphaC', 'betaC']);
    expect(a.responses.length).toBeGreaterThan(0);
    expect(a.encoding?.result.classes.cells.length).toBe(5);
    for (const t of ['traces', 'qc', 'trials', 'learning_fit', 'peri_event', 'responses', 'cells', 'groups', 'kernels', 'movement_onsets']) {
      expect(a.outputs.tables[t], t).toBeDefined();
    }
    expect(a.outputs.texts['report.html']).toMatch(/^<!DOCTYPE html>/i);
    expect(a.outputs.provenance.seed).toBe(3);
  });

  it('recovers the simulator truth on a short session: RPE regressors and the reward/movement sites', async () => {
    const a = await first;
    // Per-trial RPE of the fitted model against the simulated agent's RPE (truth).
    expect(correlation(a.learning!.regressors.rpe, sim.truth.rpe)).toBeGreaterThan(0.95);
    const cls = new Map(a.encoding!.result.classes.cells.map((c) => [c.name, c.class]));
    expect(cls.get('site01')).toBe('reward');
    expect(cls.get('site02')).toBe('movement');
  });

  it('states the assumptions of every peri-event band', async () => {
    const t = (await first).outputs.tables.responses!;
    const a = t.columns.assumptions as readonly string[];
    expect(a.length).toBe(t.rows);
    for (const s of a) expect(s).toMatch(/bootstrap.*independent.*exchangeable/);
  });

  it('is deterministic: the same session and seed give bit-identical tables', async () => {
    const again = await analyzeSession(sim.session, quick);
    expect(tableHashes(again)).toEqual(tableHashes(await first));
  });

  it('leaves a choice without an outcome out of the learning model, with a warning naming it', async () => {
    const tr = sim.session.trials!;
    const reward = Float64Array.from(tr.reward);
    reward[reward.length - 1] = NaN; // the session ended before the last outcome
    const a = await analyzeSession({ ...sim.session, trials: { ...tr, reward } }, { ...quick, encode: false, report: false, qc: false });
    expect(a.warnings.map((w) => w.code)).toContain('PIPELINE_CHOICE_WITHOUT_OUTCOME');
    expect(a.learning?.fit.nSkipped).toBe(1);
  });

  it('rejects unknown or invalid options with coded errors', async () => {
    await expect(analyzeSession(sim.session, { seeds: 1 } as object)).rejects.toMatchObject({ code: 'TF_UNKNOWN_OPTION' });
    await expect(analyzeSession(sim.session, { periEvent: { preSecs: 1 } } as object)).rejects.toMatchObject({ code: 'TF_UNKNOWN_OPTION' });
    await expect(analyzeSession(sim.session, { seed: -1 })).rejects.toMatchObject({ code: 'TF_BAD_OPTION' });
    await expect(analyzeSession(sim.session, { traceRateHz: 0 })).rejects.toMatchObject({ code: 'TF_BAD_OPTION' });
  });
});
