import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { main as correct } from '../examples/correct-photometry.js';
import { main as peth } from '../examples/peth-with-band.js';
import { main as learning } from '../examples/fit-learning-model.js';
import { main as classify } from '../examples/classify-units.js';
import { main as sync } from '../examples/sync-behaviour-box.js';

// Every example runs here on small simulated data, so none of them rots.
const out = mkdtempSync(join(tmpdir(), 'tuningfork-examples-'));

describe('examples', () => {
  it('correct-photometry writes the corrected trace', async () => {
    const r = await correct(out, 300);
    expect(r.slope).toBeGreaterThan(0);
    expect(readFileSync(r.file, 'utf8').split('\n')[0]).toBe('time,dff,z');
  });
  it('peth-with-band draws the outcome PETH with its band', () => {
    const r = peth(out, 600);
    expect(r.trials).toBeGreaterThan(20);
    expect(readFileSync(r.file, 'utf8')).toMatch(/^<svg/);
  });
  it('fit-learning-model exports per-trial RPE and APE', async () => {
    const r = await learning(out, 900);
    expect(Object.keys(r.params)).toEqual(['alpha', 'beta', 'alphaC', 'betaC']);
    expect(readFileSync(r.file, 'utf8').split('\n')[0]).toBe('trial,choice,reward,rpe,ape,q_chosen,p_choice');
  });
  it('sync-behaviour-box maps the box rewards onto the session clock within 0.5 ms of the simulated truth', () => {
    const r = sync(300);
    expect(r.rewards).toBeGreaterThan(10);
    expect(r.worstMs).toBeLessThanOrEqual(0.5);
  });
  it('classify-units returns one class per unit', async () => {
    const rows = await classify(600, 3);
    expect(rows.map((r) => r.cell)).toEqual(['unit001', 'unit002', 'unit003']);
  });
});

describe('examples (batch)', () => {
  it('batch-and-merge runs two sessions and reads the merged cells table with arquero', async () => {
    const { main: batch } = await import('../examples/batch-and-merge.js');
    // One job: the cli's session workers start from the built dist/, which the source-level test run does not use.
    const r = await batch(join(out, 'batch'), 240, 1);
    // 4 sites + 2 units per session, two sessions in groups A and B.
    expect(r.cells).toBe(12);
    expect(r.byGroup).toEqual({ A: 6, B: 6 });
  }, 300_000);
});
