import type { AnalysisView } from '@client/features/review/api/get-item';

/** A number for the metrics tables: fixed digits, or exponent form when very large or small; '—' when absent. */
const fmt = (v: number | null | undefined, digits = 2) => (v === null || v === undefined ? '—' : Math.abs(v) >= 1e5 || (Math.abs(v) < 1e-3 && v !== 0) ? v.toExponential(2) : v.toFixed(digits));

/** Metrics per channel from the engine's analysis. */
export function Metrics({ analysis }: { analysis: AnalysisView }) {
  return (
    <section className="rounded-sm border border-line bg-surface p-3">
      <h2 className="pb-1 text-md font-semibold">Metrics</h2>
      <div className="overflow-x-auto">
        <table className="w-full text-sm">
          <caption className="sr-only">Per-channel metrics: band ratio, STA/LTA peak, SNR, dominant frequency and centroid</caption>
          <thead>
            <tr className="text-left text-ink-muted">
              <th scope="col" className="pr-2 font-medium">Channel</th>
              <th scope="col" className="pr-2 text-right font-medium" title="E_high / E_low">high/low</th>
              <th scope="col" className="pr-2 text-right font-medium">log10</th>
              <th scope="col" className="pr-2 text-right font-medium">STA/LTA peak</th>
              <th scope="col" className="pr-2 text-right font-medium">SNR</th>
              <th scope="col" className="pr-2 text-right font-medium">f dom (Hz)</th>
              <th scope="col" className="text-right font-medium">centroid (Hz)</th>
            </tr>
          </thead>
          <tbody className="font-mono">
            {analysis.channels.map((c) => (
              <tr key={c.id} className="border-t border-line">
                <th scope="row" className="pr-2 text-left font-normal">
                  {c.id.split('.').pop()}
                  {c.id === analysis.leadChannel ? <span className="ml-1 font-sans text-xs text-ink-muted">(lead)</span> : null}
                </th>
                <td className="pr-2 text-right">{fmt(c.ratio)}</td>
                <td className="pr-2 text-right">{fmt(c.log10Ratio)}</td>
                <td className="pr-2 text-right">
                  {fmt(c.staLta.peak)} <span className="text-ink-muted">@{c.staLta.peakTime.toFixed(1)} s</span>
                </td>
                <td className="pr-2 text-right">{fmt(c.snr, 1)}</td>
                <td className="pr-2 text-right">{fmt(c.dominantFrequency)}</td>
                <td className="text-right">{fmt(c.spectralCentroid)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      {analysis.channels.some((c) => c.qc.length > 0 || c.warnings.length > 0) ? (
        <ul className="mt-2 list-disc pl-5 text-sm">
          {analysis.channels.flatMap((c) => [...c.qc.map((q) => `${c.id}: ${q.severity}: ${q.message}`), ...c.warnings.map((w) => `${c.id}: ${w}`)]).map((m) => (
            <li key={m}>{m}</li>
          ))}
        </ul>
      ) : null}
      <SignalSpectrumTable analysis={analysis} />
      <p className="mt-1 text-xs text-ink-muted">
        Baseline: {analysis.baseline ?? '—'}. Band energies from causal filtering from zero state.
      </p>
    </section>
  );
}

/** 10·log10 of a power ratio, dB (a PSD ratio is a power ratio; common practice). */
const powerDb = (r: number | null) => (r === null || r <= 0 ? '—' : (10 * Math.log10(r)).toFixed(1));

/**
 * The engine's signal spectrum per channel: where the triggered part rises most above the
 * pre-trigger noise (peak frequency, that ratio in dB, the centroid of the excess) and the two
 * segments it compared (shaded on the Z trace).
 */
function SignalSpectrumTable({ analysis }: { analysis: AnalysisView }) {
  const rows = analysis.channels.filter((c) => c.signalSpectrum !== undefined || c.signalSpectrumNote);
  if (rows.length === 0) return null;
  return (
    <div className="mt-3" data-testid="signal-spectrum">
      <h3 className="pb-1 text-sm font-semibold">Signal over pre-trigger noise</h3>
      <table className="w-full text-sm">
        <caption className="sr-only">Per channel: peak frequency of the signal-to-noise spectral ratio, that ratio in dB, centroid of the excess, and the segments used</caption>
        <thead>
          <tr className="text-left text-ink-muted">
            <th scope="col" className="pr-2 font-medium">Channel</th>
            <th scope="col" className="pr-2 text-right font-medium">peak (Hz)</th>
            <th scope="col" className="pr-2 text-right font-medium" title="10·log10 of signal PSD ÷ noise PSD at the peak">SNR (dB)</th>
            <th scope="col" className="pr-2 text-right font-medium">centroid (Hz)</th>
            <th scope="col" className="text-right font-medium">noise · signal (s)</th>
          </tr>
        </thead>
        <tbody className="font-mono tabular-nums">
          {rows.map((c) => {
            const sp = c.signalSpectrum ?? null;
            return (
              <tr key={c.id} className="border-t border-line">
                <th scope="row" className="pr-2 text-left font-normal">{c.id.split('.').pop()}</th>
                {sp ? (
                  <>
                    <td className="pr-2 text-right">{fmt(sp.peakFrequency)}</td>
                    <td className="pr-2 text-right">{powerDb(sp.peakSnr)}</td>
                    <td className="pr-2 text-right">{fmt(sp.centroid)}</td>
                    <td className="text-right whitespace-nowrap">
                      {sp.noiseFromS.toFixed(1)}–{sp.noiseToS.toFixed(1)} · {sp.fromS.toFixed(1)}–{sp.toS.toFixed(1)}
                    </td>
                  </>
                ) : (
                  <td colSpan={4} className="font-sans text-ink-muted">
                    {c.signalSpectrumNote ?? 'no trigger: whole-window spectrum used'}
                  </td>
                )}
              </tr>
            );
          })}
        </tbody>
      </table>
      <p className="mt-1 text-xs text-ink-muted">Welch PSD of the triggered part ÷ the same over the noise before it; a peak is counted only where the ratio clears the profile’s minimum.</p>
    </div>
  );
}
