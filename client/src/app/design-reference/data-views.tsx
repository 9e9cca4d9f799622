import { useMemo, useState } from 'react';
import { FlagMarker } from '@client/components/ui/flag-marker';
import { formatPlotNumber, PlotFrame, type PlotSeries } from '@client/components/ui/plot-frame';
import { StateMarker } from '@client/components/ui/state-marker';
import { ScrollTable, Td, Th, Tr } from '@client/components/ui/table';
import { Tabs } from '@client/components/ui/tabs';
import { TriageCaution } from '@client/components/ui/triage-caution';
import type { Theme } from '@client/lib/theme';

/** Rows for the table preview: invented Kestrel Valley windows, for display only. */
const sampleRows = [
  { id: 1, stream: 'XX.KV03.00.HHZ', start: '2026-03-14T09:26:53.589Z', ratio: 14.2, staLta: 6.3, flag: 'likely event', state: 'new' },
  { id: 2, stream: 'XX.KV04.00.HHZ', start: '2026-03-14T09:27:10.004Z', ratio: 0.41, staLta: 1.9, flag: 'likely noise', state: 'dismissed' },
  { id: 3, stream: 'XX.KV01.00.HHZ', start: '2026-03-14T11:58:02.250Z', ratio: 3.07, staLta: 3.8, flag: 'needs eyes', state: 'in review' },
  { id: 4, stream: 'XX.KV06.00.HHZ', start: '2026-03-14T12:01:44.917Z', ratio: 9.85, staLta: 5.1, flag: 'likely event', state: 'escalated' },
  { id: 5, stream: 'XX.KV02.00.HHZ', start: '2026-03-14T12:02:00.120Z', ratio: 8.6, staLta: 4.4, flag: 'likely event', state: 'labelled' },
] as const;

/** Synthetic sines for the plot preview (display only, not data). 0–20 s at 50 samples/s. */
function useDemoSignals() {
  return useMemo(() => {
    const n = 1000;
    const t = new Float64Array(n);
    const z1 = new Float64Array(n);
    const n1 = new Float64Array(n);
    const e1 = new Float64Array(n);
    for (let i = 0; i < n; i += 1) {
      const s = i / 50;
      t[i] = s;
      const burst = Math.exp(-(((s - 8) / 2.2) ** 2));
      z1[i] = 120 * Math.sin(2 * Math.PI * 1.1 * s) * burst + 18 * Math.sin(2 * Math.PI * 0.23 * s);
      n1[i] = 80 * Math.sin(2 * Math.PI * 1.4 * s + 0.7) * burst + 14 * Math.sin(2 * Math.PI * 0.21 * s + 1);
      e1[i] = 60 * Math.sin(2 * Math.PI * 0.9 * s + 1.9) * burst - 10 * Math.sin(2 * Math.PI * 0.26 * s);
    }
    const series: PlotSeries[] = [
      { label: 'HHZ', values: z1 },
      { label: 'HHN', values: n1 },
      { label: 'HHE', values: e1 },
    ];
    return { t, series };
  }, []);
}

/** The dense table with a selectable row. */
export function TablePreview() {
  const [selectedRow, setSelectedRow] = useState(1);
  return (
    <div className="flex flex-col gap-2">
      <TriageCaution variant="line" />
      <ScrollTable
        label="Sample windows" caption="Sample windows (invented, display only)" captionHidden
        head={
          <Tr>
            <Th>Stream</Th>
            <Th>Start (UTC)</Th>
            <Th figure>High/low ratio</Th>
            <Th figure>STA/LTA peak</Th>
            <Th>Flag</Th>
            <Th>State</Th>
          </Tr>
        }
      >
        {sampleRows.map((row) => (
          <Tr key={row.id} selected={row.id === selectedRow} onClick={() => setSelectedRow(row.id)}>
            <Td className="font-mono text-sm whitespace-nowrap">{row.stream}</Td>
            <Td className="text-sm whitespace-nowrap">
              <time dateTime={row.start}>{row.start}</time>
            </Td>
            <Td figure>{row.ratio.toFixed(2)}</Td>
            <Td figure>{row.staLta.toFixed(1)}</Td>
            <Td>
              <FlagMarker flag={row.flag} />
            </Td>
            <Td>
              <StateMarker state={row.state} />
            </Td>
          </Tr>
        ))}
      </ScrollTable>
    </div>
  );
}

/** The plot frame with three synthetic components. */
export function PlotPreview() {
  const demo = useDemoSignals();
  return (
    <PlotFrame
      title="XX.KV03.00 · synthetic sines (display only)"
      description="Three synthetic sine bursts, one per component, peaking near 8 seconds. For showing the plot style only."
      x={{ label: 'time', unit: 's', values: demo.t, format: (v) => v.toFixed(1) }}
      y={{ label: 'amplitude', unit: 'counts', format: (v) => formatPlotNumber(Math.round(v)) }}
      series={demo.series}
      height={200}
    />
  );
}

/** Tabs, here over the trace views. */
export function TabsPreview({ theme }: { theme: Theme }) {
  return (
    <Tabs
      label={`Trace views (${theme} preview)`}
      tabs={[
        { id: 'raw', label: 'Raw', content: <p className="text-sm">Demeaned, detrended, tapered trace.</p> },
        { id: 'low', label: 'Low band', content: <p className="text-sm">Butterworth band-pass 0.5–2 Hz, order 4, causal.</p> },
        { id: 'high', label: 'High band', content: <p className="text-sm">Butterworth band-pass 2–10 Hz, order 4, causal.</p> },
      ]}
    />
  );
}
