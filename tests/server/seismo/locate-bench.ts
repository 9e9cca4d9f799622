/**
 * `npm run bench:locate`: how long the seismo engine takes to locate a 10-station, 20-pick event
 * and to turn 20 horizontal traces (10 stations × 2 × 120 s at 100 sps) into Wood-Anderson amplitudes
 * and an ML, printed beside a plain numpy run of the same grid search and the same Wood-Anderson
 * simulation on the same inputs in the same command (tests/server/seismo/locate-bench.py,
 * /usr/bin/python3 with Debian's numpy). Figures come from here, never from a unit test.
 * The picks are synthetic (a known hypocentre, seeded Gaussian noise), the traces seeded noise.
 */
import { spawnSync } from 'node:child_process';
import { join } from 'node:path';
import { median } from '@shared/math/median';
import { percentile, timeRuns } from '@server/bench/timing';
import { centroid, greatCircleDistanceKm } from '@server/seismo/geodesy';
import { locateEvent, type LocateResult } from '@server/seismo/locate';
import { networkMagnitude, stationMagnitude } from '@server/seismo/magnitude';
import { DEFAULT_VELOCITY_MODEL } from '@server/seismo/velocity-model';
import { peakAmplitude, simulateWoodAnderson } from '@server/seismo/wood-anderson';
import { ringStations, seededNormal, synthesizePicks } from './synthetic';

const runs = Number(process.env.BENCH_RUNS ?? 30);
const centre = { latitudeDeg: 46.2, longitudeDeg: 7.4 };
const stations = ringStations(centre, [
  [5, 8], [40, 22], [77, 15], [110, 31], [150, 12], [185, 26], [220, 9], [255, 35], [290, 18], [330, 28],
]);
const truth = { latitudeDeg: 46.17, longitudeDeg: 7.43, depthKm: 8.3, timeS: 1_773_480_413.25 };
const picks = synthesizePicks(stations, truth, DEFAULT_VELOCITY_MODEL, ['P', 'S'], { P: 0.05, S: 0.1 }, seededNormal(17));
const spread = Math.max(...stations.map((s) => greatCircleDistanceKm(centroid(stations), s)));
const halfWidthKm = Math.min(500, Math.max(50, spread + 50));

// Warm up the JIT, then time.
let result: LocateResult = locateEvent(stations, picks, DEFAULT_VELOCITY_MODEL);
for (let i = 0; i < 5; i++) result = locateEvent(stations, picks, DEFAULT_VELOCITY_MODEL);
// CPU time beside wall time: on a shared machine the wall time also counts the waits for a core.
const locateCpuMs: number[] = [];
const locateMs = timeRuns(runs, () => {
  const c0 = process.cpuUsage();
  result = locateEvent(stations, picks, DEFAULT_VELOCITY_MODEL);
  const c = process.cpuUsage(c0);
  locateCpuMs.push((c.user + c.system) / 1000);
}).sort((a, b) => a - b);
if (!result.ok) throw new Error(`bench: the event was not located: ${result.reason}`);
const origin = result.origin;

const fs = 100;
const n = 120 * fs;
const normal = seededNormal(99);
const traces = Array.from({ length: 20 }, () => Float64Array.from({ length: n }, () => normal() * 1e-6));
const magnitudeOnce = (): number => {
  const stationMls: number[] = [];
  for (let s = 0; s < 10; s++) {
    const amps = [0, 1].map((c) => peakAmplitude(simulateWoodAnderson(traces[2 * s + c] as Float64Array, fs), fs).amplitude);
    stationMls.push(stationMagnitude(amps, 20 + 10 * s).value);
  }
  return networkMagnitude(stationMls).value;
};
for (let i = 0; i < 3; i++) magnitudeOnce();
const magnitudeMs = timeRuns(Math.max(5, Math.round(runs / 3)), () => void magnitudeOnce()).sort((a, b) => a - b);

const py = spawnSync('/usr/bin/python3', [join(import.meta.dirname, 'locate-bench.py')], {
  input: JSON.stringify({ stations, picks, model: DEFAULT_VELOCITY_MODEL, maxDepthKm: 40, halfWidthKm, centre: centroid(stations), runs, traces: { count: 20, n, fs } }),
  encoding: 'utf8',
});
const fmt = (v: number): string => v.toFixed(1).padStart(7);
console.log(`bench:locate — 10 stations, 20 picks (P σ 0.05 s, S σ 0.10 s), default model; ${runs} runs, wall median (p90) and CPU median`);
console.log(`  Seisift locateEvent (grid 31²×9 + 21²×9, then Geiger): ${fmt(median(locateMs))} ms (${percentile(locateMs, 90).toFixed(1)}), CPU ${median(locateCpuMs).toFixed(1)} ms   issue's target ≤ 20 ms`);
if (py.status === 0) {
  const ref = JSON.parse(py.stdout) as { gridMedianMs: number; gridCpuMedianMs: number; woodAndersonMedianMs: number; numpy: string; gridBest: { latitudeDeg: number; longitudeDeg: number; depthKm: number; timeS: number } };
  console.log(`  numpy ${ref.numpy} grid search only (same grids and picks):  ${fmt(ref.gridMedianMs)} ms (CPU ${ref.gridCpuMedianMs.toFixed(1)})`);
  console.log(
    `  numpy grid best vs Seisift origin: ${greatCircleDistanceKm(ref.gridBest, origin).toFixed(2)} km apart, depths ${ref.gridBest.depthKm.toFixed(2)} / ${origin.depthKm.toFixed(2)} km`,
  );
  console.log(`  Wood-Anderson + ML, 20 traces × 120 s at 100 sps: Seisift ${fmt(median(magnitudeMs))} ms, numpy FFT ${fmt(ref.woodAndersonMedianMs)} ms`);
} else {
  console.log(`  numpy reference did not run (${py.stderr.trim() || `exit ${py.status}`}); install Debian python3-numpy`);
  console.log(`  Wood-Anderson + ML, 20 traces × 120 s at 100 sps: Seisift ${fmt(median(magnitudeMs))} ms`);
}
console.log(
  `  location vs the synthetic truth: ${greatCircleDistanceKm(truth, origin).toFixed(2)} km, depth ${origin.depthKm.toFixed(2)} km (true ${truth.depthKm}), ` +
    `time ${(origin.timeS - truth.timeS).toFixed(3)} s; ellipse ${origin.uncertainty.ellipse.semiMajorKm.toFixed(2)} × ${origin.uncertainty.ellipse.semiMinorKm.toFixed(2)} km, RMS ${origin.rmsS.toFixed(3)} s`,
);
console.log('  (automatic picks are not part of this engine yet: the chain timed here is location + Wood-Anderson + ML)');
