/**
 * `npm run bench:locate`: how long the seismo engine takes to locate a 10-station, 20-pick event
 * and to turn 20 horizontal traces (10 stations × 2 × 120 s at 100 sps) into Wood-Anderson amplitudes
 * and an ML, printed beside a plain numpy run of the same grid search and the same Wood-Anderson
 * simulation on the same inputs in the same command (tests/server/seismo/locate-bench.py,
 * /usr/bin/python3 with Debian's numpy). Figures come from here, never from a unit test.
 * The picks are synthetic (a known hypocentre, seeded Gaussian noise), the traces seeded noise; the
 * whole automatic chain runs on synthetic three-component windows of the same hypocentre.
 */
import { spawnSync } from 'node:child_process';
import { availableParallelism, loadavg } from 'node:os';
import { join } from 'node:path';
import { median } from '@shared/math/median';
import { percentile, timeRuns } from '@server/bench/timing';
import { centroid, greatCircleDistanceKm } from '@server/seismo/geodesy';
import { locateEvent, type LocateResult } from '@server/seismo/locate';
import { networkMagnitude, stationMagnitude } from '@server/seismo/magnitude';
import { DEFAULT_VELOCITY_MODEL } from '@server/seismo/velocity-model';
import { peakAmplitude, simulateWoodAnderson } from '@server/seismo/wood-anderson';
import { parseStationXml } from '@server/formats/stationxml';
import { solveEvent } from '@server/seismo/event-chain';
import { responseFromStages } from '@server/seismo/instrument-response';
import { defaultProcessingProfile } from '@shared/schemas/processing-profile';
import { ringStations, seededNormal, synthesizePicks } from './synthetic';
import { syntheticEvent, syntheticStationXml } from './synthetic-waveforms';

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
const load = (): string => `load average ${loadavg().map((v) => v.toFixed(2)).join(' / ')} (1 / 5 / 15 min) on ${availableParallelism()} cores`;
console.log(`machine: ${load()} — the wall times count the waits for a core; the CPU times do not`);
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

// The whole automatic chain as the server and `npm run -s locate` run it (server/seismo/event-chain.ts):
// automatic picks, location, instrument response removal to Wood-Anderson, ML; 10 stations × 3
// channels × 120 s at 100 sps of synthetic windows (tests/server/seismo/synthetic-waveforms.ts).
const chainStations = stations.map((s, i) => ({ ...s, code: `B${String(i).padStart(2, '0')}` }));
const synth = syntheticEvent(chainStations, truth, DEFAULT_VELOCITY_MODEL, 7, 120);
const streams = synth.flatMap((st) => st.channels.map((c) => ({ id: `XX.${st.code}.00.${c.channel}`, network: 'XX', station: st.code, channel: c.channel, sampleRateHz: 100, startTimeUs: c.startTimeUs, samples: Float64Array.from(c.counts) })));
const doc = parseStationXml(syntheticStationXml(chainStations));
const responses = new Map(doc.networks[0]?.stations.flatMap((st) => st.channels.map((c) => [c.id, responseFromStages(c)] as const)) ?? []);
const chainStationList = chainStations.map((s) => ({ network: 'XX', code: s.code, latitudeDeg: s.latitudeDeg, longitudeDeg: s.longitudeDeg }));
const chainOnce = () => solveEvent(streams, chainStationList, null, { velocityModel: DEFAULT_VELOCITY_MODEL, responses, profile: defaultProcessingProfile });
let chain = chainOnce();
for (let i = 0; i < 2; i++) chain = chainOnce();
const chainCpuMs: number[] = [];
const chainMs = timeRuns(Math.max(5, Math.round(runs / 3)), () => {
  const c0 = process.cpuUsage();
  chain = chainOnce();
  const c = process.cpuUsage(c0);
  chainCpuMs.push((c.user + c.system) / 1000);
}).sort((a, b) => a - b);
console.log(
  `  whole automatic chain (picks, location, response removal, Wood-Anderson, ML), 10 stations × 3 channels × 120 s at 100 sps: ${fmt(median(chainMs))} ms (p90 ${percentile(chainMs, 90).toFixed(1)}), CPU ${median(chainCpuMs).toFixed(1)} ms   issue's target ≤ 150 ms`,
);
console.log(
  `    ${chain.picks.length} automatic picks; ${chain.origin ? `origin ${greatCircleDistanceKm(truth, chain.origin).toFixed(2)} km from the synthetic truth, ML ${chain.magnitude?.value.toFixed(2) ?? '—'} from ${chain.magnitude?.stationCount ?? 0} stations` : `not located: ${chain.refusal?.reason ?? ''}`}`,
);
console.log(`machine at the end: ${load()}`);
