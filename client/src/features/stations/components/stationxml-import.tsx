import { useId, useState } from 'react';
import { Badge, type BadgeTone } from '@client/components/ui/badge';
import { Button } from '@client/components/ui/button';
import { ScrollTable, Td, Th, Tr } from '@client/components/ui/table';
import { previewStationXml, useApplyStationXml, type ImportPreview } from '@client/features/stations/api/import-stationxml';

const tone: Record<string, BadgeTone> = { new: 'ok', changed: 'info', unchanged: 'neutral', skipped: 'neutral', invalid: 'danger', refused: 'danger' };

const show = (v: unknown) => (v === null || v === undefined ? '—' : typeof v === 'number' ? String(v) : typeof v === 'string' ? v : JSON.stringify(v));

/**
 * StationXML import: pick a file, see what it would change (new / changed / unchanged stations and
 * channels with each field's old and new value), then apply exactly that in one go.
 */
export function StationXmlImport({ onDone }: { onDone: () => void }) {
  const [file, setFile] = useState<File | null>(null);
  const [preview, setPreview] = useState<ImportPreview | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [loading, setLoading] = useState(false);
  const [applied, setApplied] = useState(false);
  const apply = useApplyStationXml();
  const inputId = useId();

  const pick = async (f: File | undefined) => {
    setPreview(null);
    setError(null);
    setApplied(false);
    if (!f) return;
    setFile(f);
    setLoading(true);
    try {
      setPreview(await previewStationXml(f));
    } catch (err) {
      setError(err instanceof Error ? err.message : String(err));
    } finally {
      setLoading(false);
    }
  };

  const changes = preview ? preview.counts.newStations + preview.counts.changedStations : 0;
  // Stations refused outright (not yours to see) are left out by the server; only visible ones you may not change block the apply.
  const refused = preview ? preview.stations.filter((s) => !s.allowed && s.status !== 'refused') : [];

  return (
    <section aria-labelledby="import-title" className="flex flex-col gap-3 rounded-sm border border-line bg-surface px-4 py-3">
      <h2 id="import-title" className="text-md font-semibold">
        Import StationXML
      </h2>
      <div className="flex flex-col gap-1">
        <label htmlFor={inputId} className="text-sm font-medium">
          FDSN StationXML file (1.0–1.2)
        </label>
        <input id={inputId} type="file" accept=".xml,application/xml,text/xml" onChange={(e) => void pick(e.target.files?.[0])} className="text-sm" />
      </div>
      {loading ? <p className="text-sm text-ink-muted">Reading the file…</p> : null}
      {error ? (
        <p role="alert" className="text-sm text-danger">
          {error}
        </p>
      ) : null}
      {preview ? (
        <>
          <p className="text-sm">
            {preview.counts.newStations} new and {preview.counts.changedStations} changed stations, {preview.counts.unchangedStations} unchanged; {preview.counts.newChannels} new and{' '}
            {preview.counts.changedChannels} changed channels{preview.counts.invalid ? `; ${preview.counts.invalid} entries cannot be imported` : ''}. Nothing is written until you apply.
          </p>
          <ScrollTable
            label="Import preview" caption="What the import would change" captionHidden
            head={
              <Tr>
                <Th>Station or channel</Th>
                <Th>Change</Th>
                <Th>Fields (before → after)</Th>
              </Tr>
            }
          >
            {preview.stations.flatMap((s) => [
              <Tr key={s.station}>
                <Td className="font-mono font-semibold">{s.station}</Td>
                <Td>
                  <Badge tone={tone[s.status] ?? 'neutral'}>{s.status}</Badge>
                  {!s.allowed && s.status !== 'refused' ? <span className="block text-sm text-danger">you may not change this station</span> : null}
                </Td>
                <Td className="text-sm">{s.message ?? (s.fields.length ? s.fields.map((f) => `${f.field}: ${show(f.from)} → ${show(f.to)}`).join('; ') : '—')}</Td>
              </Tr>,
              ...s.channels.map((c) => (
                <Tr key={`${s.station}-${c.streamId}`}>
                  <Td className="pl-6 font-mono text-sm">{c.streamId}</Td>
                  <Td>
                    <Badge tone={tone[c.status] ?? 'neutral'}>{c.status}</Badge>
                  </Td>
                  <Td className="text-sm">{c.message ?? (c.fields.length ? c.fields.map((f) => `${f.field}: ${show(f.from)} → ${show(f.to)}`).join('; ') : '—')}</Td>
                </Tr>
              )),
            ])}
          </ScrollTable>
          {applied ? (
            <p role="status" className="text-sm">
              Applied. The stations and channels above are in the registry.
            </p>
          ) : (
            <div className="flex items-center gap-2">
              <Button
                variant="primary"
                disabled={changes === 0 || refused.length > 0 || apply.isPending || !file}
                onClick={() => {
                  if (!file) return;
                  apply.mutate(
                    { file, previewHash: preview.previewHash },
                    {
                      onSuccess: () => {
                        setApplied(true);
                        onDone();
                      },
                      onError: (err) => setError(err.message),
                    },
                  );
                }}
              >
                {changes === 0 ? 'Nothing to apply' : `Apply ${changes} station change${changes === 1 ? '' : 's'}`}
              </Button>
              {refused.length > 0 ? <span className="text-sm text-danger">Some stations are not yours to change; ask an admin.</span> : null}
            </div>
          )}
        </>
      ) : null}
    </section>
  );
}
