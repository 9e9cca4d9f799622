/**
 * `npm run demo:generate [-- --out DIR]`: writes the invented Kestrel Valley demo day into
 * demo-waveforms/ (or DIR): MiniSEED 2 Steim-2 windows (one file per station window with its three
 * channels; a window with a telemetry gap as two files, before and after it), a few single-channel
 * CSV windows, the network's StationXML and manifest.json (what each
 * file holds, the events with their arrival times). Deterministic: a second run writes byte-identical
 * files. Invented data, for the demo only.
 */
import { mkdirSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { demoStations } from '@server/db/seed-demo';
import { formatIsoTimeUs } from '@server/formats/iso-time';
import { encodeDemoCsv, encodeDemoMiniSeed, type CountsPiece } from './encode';
import {
  DEMO_DAY,
  DEMO_EVENTS,
  DEMO_NETWORK,
  DEMO_SAMPLE_RATE_HZ,
  DEMO_SENSITIVITY,
  DEMO_WINDOW_S,
  HISTORY_DAYS,
  RG_KM_S,
  VP_KM_S,
  VS_KM_S,
  demoStation,
  eventAtStation,
  planDemoWindows,
  planHistoryWindows,
  type PlannedWindow,
} from './scenario';
import { demoStationXml } from './stationxml';
import { dismissalReason, synthesizeWindow } from './synth';

/** The folders of demo-waveforms/ the generator owns. */
export const DEMO_FILE_FOLDERS = ['mseed', 'history', 'csv', 'stationxml'] as const;

/** One generated file: its path relative to the output folder and its bytes. */
export interface DemoFile {
  path: string;
  bytes: Uint8Array;
}

/** What the manifest says about one waveform file. */
export interface DemoManifestFile {
  file: string;
  format: 'mseed2-steim2' | 'csv';
  station: string;
  streams: string[];
  /** First sample, ISO 8601 UTC with µs. */
  start: string;
  durationS: number;
  reason: PlannedWindow['reason'];
  contents: string[];
  /** Events in the window: id, type and arrival times (ISO) at this station. */
  events: { id: string; type: string; p: string; s: string; hypocentralKm: number }[];
  /** History windows only: the noise reason the demo analyst dismissed it with (server/demo/synth.ts `dismissalReason`). */
  noiseReason?: ReturnType<typeof dismissalReason>;
}

/** The manifest (demo-waveforms/manifest.json). */
export interface DemoManifest {
  description: string;
  sampleRateHz: number;
  windowS: number;
  units: string;
  sensitivityCountsPerMS: number;
  velocityModel: { vpKmS: number; vsKmS: number; rgKmS: number; note: string };
  files: DemoManifestFile[];
  events: {
    id: string;
    type: string;
    origin: string;
    latitude: number;
    longitude: number;
    depthKm: number;
    recordedBy: { station: string; file: string; hypocentralKm: number; p: string; s: string; peakVelocityMS: number }[];
  }[];
}

/**
 * Path of a window's file: `mseed/XX.KV03.2026-03-14T09-26-40.mseed` (MiniSEED of the demo day),
 * `history/XX.KV03.2026-03-09T04-17-23.mseed` (the noise history before it) or
 * `csv/XX.KV05.00.HHZ.2026-03-14T15-22-00.csv` (CSV).
 */
export function demoFileName(w: PlannedWindow): string {
  const t = new Date(w.startUs / 1000).toISOString().slice(0, 19).replace(/:/gu, '-');
  if (w.format === 'csv') return `csv/${DEMO_NETWORK}.${w.station}.00.${w.channels[0] ?? 'HHZ'}.${t}.csv`;
  return `${w.reason === 'history' ? 'history' : 'mseed'}/${DEMO_NETWORK}.${w.station}.${t}.mseed`;
}

/**
 * Generates every demo file in memory (no I/O): the stations' noise history of
 * {@link planHistoryWindows}, the demo day's windows of {@link planDemoWindows}, `stationxml/XX.xml`
 * and `manifest.json`, in a fixed order (history first, as it is ingested).
 * @throws RangeError when the plan contradicts itself or a window cannot be encoded
 */
export function buildDemoFiles(): DemoFile[] {
  const files: DemoFile[] = [];
  const manifestFiles: DemoManifestFile[] = [];
  const plan = [...planHistoryWindows(), ...planDemoWindows()];
  const fileOf = new Map<string, string>();
  for (const w of plan) {
    const syn = synthesizeWindow(w.station, w.startUs, w.glitch);
    const n = syn.counts[w.channels[0] ?? 'HHZ'].length;
    // A window with a telemetry gap is sent as its two continuous parts, one file each, as a
    // station has to: an upload whose samples cannot all sit at their times is refused.
    const parts = syn.gap ? [{ from: 0, to: syn.gap.from }, { from: syn.gap.to, to: n }] : [{ from: 0, to: n }];
    parts.forEach((part, k) => {
      const startUs = w.startUs + (part.from * 1e6) / DEMO_SAMPLE_RATE_HZ;
      const endUs = w.startUs + (part.to * 1e6) / DEMO_SAMPLE_RATE_HZ;
      const path = demoFileName({ ...w, startUs });
      let bytes: Uint8Array;
      if (w.format === 'mseed') {
        const pieces: CountsPiece[] = w.channels.map((ch) => ({ network: DEMO_NETWORK, station: w.station, location: '00', channel: ch, sampleRateHz: DEMO_SAMPLE_RATE_HZ, startTimeUs: startUs, samples: syn.counts[ch].slice(part.from, part.to) }));
        bytes = encodeDemoMiniSeed(pieces);
      } else {
        const ch = w.channels[0] ?? 'HHZ';
        const text = encodeDemoCsv(`${DEMO_NETWORK}.${w.station}.00.${ch}`, startUs, DEMO_SAMPLE_RATE_HZ, syn.counts[ch].slice(part.from, part.to), 'Kestrel Valley demo (invented data); counts at 1.5e9 counts per m/s');
        bytes = new TextEncoder().encode(text);
      }
      const events = parts.length === 1 ? syn.events : syn.events.filter(({ at }) => at.pArrivalUs >= startUs && at.pArrivalUs < endUs);
      files.push({ path, bytes });
      for (const { event } of events) fileOf.set(`${event.id}/${w.station}`, path);
      const partNote = parts.length === 1 ? [] : [k === 0 ? `part 1 of 2: the ${(part.to - part.from) / DEMO_SAMPLE_RATE_HZ} s before the gap (the rest is the next file)` : `part 2 of 2: the ${(part.to - part.from) / DEMO_SAMPLE_RATE_HZ} s after the gap`];
      manifestFiles.push({
        file: path,
        format: w.format === 'mseed' ? 'mseed2-steim2' : 'csv',
        station: w.station,
        streams: w.channels.map((ch) => `${DEMO_NETWORK}.${w.station}.00.${ch}`),
        start: formatIsoTimeUs(startUs),
        durationS: (part.to - part.from) / DEMO_SAMPLE_RATE_HZ,
        reason: w.reason,
        contents: [...syn.contents, ...partNote],
        events: events.map(({ event, at }) => ({
          id: event.id,
          type: event.type,
          p: formatIsoTimeUs(at.pArrivalUs),
          s: formatIsoTimeUs(at.sArrivalUs),
          hypocentralKm: Number(at.hypocentralKm.toFixed(3)),
        })),
        ...(w.reason === 'history' ? { noiseReason: dismissalReason(syn.noise) } : {}),
      });
    });
  }
  files.push({ path: `stationxml/${DEMO_NETWORK}.xml`, bytes: new TextEncoder().encode(demoStationXml(demoStations)) });

  const manifest: DemoManifest = {
    description: `Invented Kestrel Valley demo day ${DEMO_DAY} (network ${DEMO_NETWORK}) and each station's noise history of the ${HISTORY_DAYS} days before it (reason "history"); written by npm run demo:generate`,
    sampleRateHz: DEMO_SAMPLE_RATE_HZ,
    windowS: DEMO_WINDOW_S,
    units: 'counts (int32); ground velocity = counts / sensitivity',
    sensitivityCountsPerMS: DEMO_SENSITIVITY,
    velocityModel: { vpKmS: VP_KM_S, vsKmS: VS_KM_S, rgKmS: RG_KM_S, note: 'homogeneous half-space, straight rays, t = R / v with R the hypocentral distance' },
    files: manifestFiles,
    events: DEMO_EVENTS.map((ev) => ({
      id: ev.id,
      type: ev.type,
      origin: formatIsoTimeUs(ev.originTimeUs),
      latitude: ev.latitude,
      longitude: ev.longitude,
      depthKm: ev.depthKm,
      recordedBy: demoStations
        .filter((st) => fileOf.has(`${ev.id}/${st.code}`))
        .map((st) => {
          const at = eventAtStation(ev, demoStation(st.code));
          return {
            station: st.code,
            file: fileOf.get(`${ev.id}/${st.code}`) ?? '',
            hypocentralKm: Number(at.hypocentralKm.toFixed(3)),
            p: formatIsoTimeUs(at.pArrivalUs),
            s: formatIsoTimeUs(at.sArrivalUs),
            peakVelocityMS: Number(at.peakVelocityMS.toPrecision(3)),
          };
        }),
    })),
  };
  files.push({ path: 'manifest.json', bytes: new TextEncoder().encode(`${JSON.stringify(manifest, null, 2)}\n`) });
  return files;
}

/**
 * Writes the demo files into `outDir` (creating folders), first removing `.mseed`/`.csv`/`.xml`
 * files of earlier runs from its mseed/, history/, csv/ and stationxml/ folders (README.md is left alone).
 * @returns the files written and their total size in bytes
 */
export function writeDemoFiles(outDir: string): { files: DemoFile[]; totalBytes: number } {
  for (const sub of DEMO_FILE_FOLDERS) {
    const dir = join(outDir, sub);
    mkdirSync(dir, { recursive: true });
    for (const name of readdirSync(dir)) if (/\.(mseed|csv|xml)$/u.test(name)) rmSync(join(dir, name));
  }
  const files = buildDemoFiles();
  let totalBytes = 0;
  for (const f of files) {
    const path = join(outDir, f.path);
    mkdirSync(dirname(path), { recursive: true });
    writeFileSync(path, f.bytes);
    totalBytes += f.bytes.length;
  }
  return { files, totalBytes };
}

/** The repository's demo-waveforms folder. */
export const DEMO_WAVEFORMS_DIR = resolve(import.meta.dirname, '../../demo-waveforms');

function main(argv: readonly string[]): void {
  let out = DEMO_WAVEFORMS_DIR;
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    if (a === '--out') {
      const v = argv[++i];
      if (!v) throw new Error('--out needs a folder');
      out = resolve(v);
    } else if (a === '--help' || a === '-h') {
      console.log('usage: npm run demo:generate [-- --out DIR]   (default: demo-waveforms/)');
      return;
    } else {
      throw new Error(`unknown argument '${a}' (try --help)`);
    }
  }
  const t0 = performance.now();
  const { files, totalBytes } = writeDemoFiles(out);
  const waveforms = files.filter((f) => /\.(mseed|csv)$/u.test(f.path)).length;
  console.log(`demo:generate: ${waveforms} waveform files + StationXML + manifest, ${(totalBytes / 1e6).toFixed(2)} MB in ${out} (${((performance.now() - t0) / 1000).toFixed(1)} s)`);
}

if (process.argv[1] && import.meta.url === pathToFileURL(resolve(process.argv[1])).href) {
  try {
    main(process.argv.slice(2));
  } catch (err) {
    console.error(`demo:generate: ${err instanceof Error ? err.message : String(err)}`);
    process.exit(1);
  }
}
