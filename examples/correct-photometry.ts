/**
 * Correct one photometry recording: low-pass both channels, remove bleaching, fit the isosbestic
 * control to the sensor by robust regression, and compute ΔF/F and its z-score.
 *
 * Run:  npm run build && npx tsx examples/correct-photometry.ts [out-dir]
 * (Here the recording comes from the simulator; with your own file use io.readTrace, shown below.)
 */
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { writeCsv } from '@tuningfork/io';
import { conditionSite, siteQuality } from '@tuningfork/signal';
import { simulateSession } from '@tuningfork/simulate';

export async function main(outDir = 'example-output', durationSec = 600): Promise<{ slope: number; flags: readonly string[]; file: string }> {
  // 1. A recording: one site, sensor + isosbestic control at 1 kHz. With a CSV of your own:
  //    const s = await readTrace('site.csv', { time: 'time', channels: ['signal', 'control'] }) …
  const { session } = simulateSession({ durationSec, nSites: 1, nUnits: 0, seed: 7 });
  const site = session.photometry[0]!;

  // 2. Quality first: clipping, bleaching, SNR, control–signal correlation, spectral peaks.
  const qc = siteQuality(site);
  console.log(`QC ${site.name}: SNR ${qc.snr?.snr.toFixed(1)}, bleached ${(100 * qc.signal.bleachingFraction).toFixed(1)} %, flags [${qc.flags.join(', ')}]`);

  // 3. The correction chain; every default can be overridden (here the fitting method is spelled out).
  const out = conditionSite(site, { lowPassHz: 10, fitMethod: 'bisquare', zScore: 'session' });
  console.log(`control fit: slope ${out.fit?.slope.toFixed(3)}, ${out.fit?.iterations} IRLS iterations, converged ${out.fit?.converged}`);

  // 4. Save ΔF/F and z every 20 ms (the file is written atomically).
  const step = Math.round(out.dff.sampleRate / 50);
  const n = Math.floor(out.dff.values.length / step);
  const time = Float64Array.from({ length: n }, (_, i) => out.dff.t0 + (i * step) / out.dff.sampleRate);
  const dff = Float64Array.from({ length: n }, (_, i) => out.dff.values[i * step]!);
  const z = Float64Array.from({ length: n }, (_, i) => out.z.signal.values[i * step]!);
  const file = join(outDir, `${site.name}-corrected.csv`);
  await writeCsv(file, { time, dff, z });
  console.log(`wrote ${file}`);
  return { slope: out.fit?.slope ?? NaN, flags: out.flags, file };
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) await main(process.argv[2]);
