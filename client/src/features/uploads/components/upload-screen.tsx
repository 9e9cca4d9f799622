import { useCallback, useId, useRef, useState, type DragEvent } from 'react';
import { Link } from 'react-router';
import type { UploadOutcome } from '@shared/schemas/upload';
import { streamIdSchema } from '@shared/schemas/upload';
import { Badge } from '@client/components/ui/badge';
import { Button } from '@client/components/ui/button';
import { FlagMarker } from '@client/components/ui/flag-marker';
import { Input } from '@client/components/ui/input';
import { Table, TableScroll, TBody, Td, Th, THead, Tr } from '@client/components/ui/table';
import { TriageCaution } from '@client/components/ui/triage-caution';
import { paths } from '@client/config/paths';
import { cx } from '@client/lib/cx';
import { isCsvName, uploadFile, type UploadProgress } from '@client/features/uploads/api/upload-file';

/** One file on the page, from picking to its outcome. */
type Entry = {
  key: string;
  file: File;
  streamId: string;
  state: { phase: 'ready' } | UploadProgress | { phase: 'done'; outcome: UploadOutcome };
};

const sizeWords = (bytes: number) => (bytes < 1024 ? `${bytes} B` : bytes < 1024 * 1024 ? `${(bytes / 1024).toFixed(1)} KB` : `${(bytes / 1024 / 1024).toFixed(2)} MB`);

/** A short heading for a refused file, in plain words; the server's message says the rest. */
export function refusalHeading(httpStatus: number): string {
  switch (httpStatus) {
    case 0:
      return 'Not sent';
    case 401:
      return 'Not signed in';
    case 403:
      return 'Not your station';
    case 413:
      return 'Too large';
    case 422:
      return 'Could not be used';
    case 400:
      return 'Incomplete request';
    default:
      return httpStatus >= 500 ? 'Server error' : 'Refused';
  }
}

/**
 * The upload page: drop or pick several MiniSEED/CSV files, give CSV files their stream id, send
 * them (one request per file, so each has its own progress bar and its own answer), then a
 * results table linking every new queue item. Errors are shown per file in the server's words.
 */
export function UploadScreen() {
  const [entries, setEntries] = useState<Entry[]>([]);
  const [dragging, setDragging] = useState(false);
  const [busy, setBusy] = useState(false);
  const inputRef = useRef<HTMLInputElement>(null);
  const counter = useRef(0);
  const hintId = useId();

  const add = useCallback((files: FileList | File[]) => {
    const list = Array.from(files);
    setEntries((prev) => [...prev.filter((e) => e.state.phase !== 'done'), ...list.map((file) => ({ key: `f${++counter.current}`, file, streamId: '', state: { phase: 'ready' } as const }))]);
  }, []);

  const update = (key: string, patch: Partial<Entry>) => setEntries((prev) => prev.map((e) => (e.key === key ? { ...e, ...patch } : e)));

  const csvProblem = (e: Entry): string | null => {
    if (!isCsvName(e.file.name)) return null;
    if (e.streamId.trim() === '') return 'A CSV file needs its stream id, e.g. XX.KV01.00.HHZ';
    const parsed = streamIdSchema.safeParse(e.streamId);
    return parsed.success ? null : (parsed.error.issues[0]?.message ?? 'invalid stream id');
  };

  const ready = entries.filter((e) => e.state.phase === 'ready');
  const blocked = ready.some((e) => csvProblem(e) !== null);

  const send = async () => {
    setBusy(true);
    for (const e of ready) {
      const outcome = await uploadFile(e.file, {
        ...(isCsvName(e.file.name) ? { streamId: e.streamId.trim() } : {}),
        onProgress: (p) => update(e.key, { state: p }),
      });
      update(e.key, { state: { phase: 'done', outcome } });
    }
    setBusy(false);
  };

  const onDrop = (ev: DragEvent<HTMLDivElement>) => {
    ev.preventDefault();
    setDragging(false);
    if (ev.dataTransfer.files.length) add(ev.dataTransfer.files);
  };

  const done = entries.flatMap((e) => (e.state.phase === 'done' ? [{ entry: e, outcome: e.state.outcome }] : []));

  return (
    <div className="flex max-w-5xl flex-col gap-4">
      <header>
        <h1 className="text-xl font-semibold">Upload waveform windows</h1>
        <p className="text-base text-ink-muted">
          MiniSEED 2, MiniSEED 3 or CSV (<span className="font-mono">t_seconds,counts</span>). Each file is decoded, checked and analysed; every station window in it becomes one queue item.
        </p>
      </header>

      <div
        onDragOver={(ev) => {
          ev.preventDefault();
          setDragging(true);
        }}
        onDragLeave={() => setDragging(false)}
        onDrop={onDrop}
        className={cx('flex flex-col items-start gap-2 rounded-sm border-2 border-dashed px-5 py-6', dragging ? 'border-accent bg-surface' : 'border-line-strong')}
      >
        <p className="text-md font-semibold">Drop files here</p>
        <p id={hintId} className="text-sm text-ink-muted">
          or pick them; several at once is fine. The same file twice is recognised and returns its existing item.
        </p>
        <input
          ref={inputRef}
          type="file"
          multiple
          accept=".mseed,.miniseed,.ms,.msd,.csv,.txt,application/vnd.fdsn.mseed,text/csv"
          aria-describedby={hintId}
          aria-label="Waveform files"
          className="sr-only"
          onChange={(ev) => {
            if (ev.target.files?.length) add(ev.target.files);
            ev.target.value = '';
          }}
        />
        <Button onClick={() => inputRef.current?.click()}>Choose files…</Button>
      </div>

      {entries.length > 0 ? (
        <section aria-labelledby="upload-files" className="flex flex-col gap-2">
          <h2 id="upload-files" className="text-md font-semibold">
            Files
          </h2>
          <ul className="flex flex-col gap-2">
            {entries.map((e) => (
              <FileRow key={e.key} entry={e} busy={busy} csvProblem={csvProblem(e)} onStreamId={(v) => update(e.key, { streamId: v })} onRemove={() => setEntries((prev) => prev.filter((x) => x.key !== e.key))} />
            ))}
          </ul>
          {busy || ready.length > 0 ? (
            <div className="flex items-center gap-3">
              <Button variant="primary" disabled={busy || blocked} onClick={() => void send()}>
                {busy ? 'Uploading…' : `Upload ${ready.length} file${ready.length === 1 ? '' : 's'}`}
              </Button>
              {blocked ? <span className="text-sm text-danger">Give every CSV file its stream id first.</span> : null}
            </div>
          ) : (
            <p className="text-sm text-ink-muted">Every file has been sent. Drop or choose more files to upload again.</p>
          )}
        </section>
      ) : null}

      {done.length > 0 ? (
        <section aria-labelledby="upload-results" className="flex flex-col gap-2">
          <h2 id="upload-results" className="text-md font-semibold">
            Results
          </h2>
          <TriageCaution variant="line" />
          <TableScroll label="Upload results">
            <Table caption="Outcome of each uploaded file" captionHidden>
              <THead>
                <Tr>
                  <Th>File</Th>
                  <Th>Outcome</Th>
                  <Th>Queue items</Th>
                </Tr>
              </THead>
              <TBody>
                {done.map(({ entry, outcome }) => (
                  <Tr key={entry.key}>
                    <Td className="font-mono">{outcome.filename}</Td>
                    <Td>
                      {outcome.status === 'created' ? (
                        <Badge tone="ok">Queued</Badge>
                      ) : outcome.status === 'duplicate' ? (
                        <Badge tone="info">Already uploaded</Badge>
                      ) : (
                        <span className="flex flex-col gap-0.5">
                          <Badge tone="danger">{refusalHeading(outcome.httpStatus)}</Badge>
                          <span className="text-sm">{outcome.message}</span>
                        </span>
                      )}
                    </Td>
                    <Td>
                      {outcome.items && outcome.items.length > 0 ? (
                        <ul className="flex flex-col gap-1">
                          {outcome.items.map((it) => (
                            <li key={it.id} className="flex flex-wrap items-center gap-2">
                              <Link to={`${paths.queueItem.href}/${it.id}`} className="font-mono">
                                Item {it.id}
                              </Link>
                              <span className="font-mono text-sm">{it.station}</span>
                              <FlagMarker flag={it.flag} />
                              <span className="text-sm text-ink-muted">score {it.score.toFixed(1)}</span>
                            </li>
                          ))}
                        </ul>
                      ) : (
                        <span className="text-ink-muted">—</span>
                      )}
                    </Td>
                  </Tr>
                ))}
              </TBody>
            </Table>
          </TableScroll>
        </section>
      ) : null}
    </div>
  );
}

/**
 * A per-file progress bar in the kit's tokens (docs/design.md), not the browser's native bar, whose
 * colour is the engine's own: a sunken track with a strong line (≥ 3:1 against the panel), filled
 * with the accent (or danger for a refused file). `percent` null is indeterminate (analysing): a
 * striped fill, still without motion, plus the status word next to the file name.
 */
function ProgressBar({ label, percent, tone }: { label: string; percent: number | null; tone: 'accent' | 'danger' }) {
  const fill = tone === 'danger' ? 'bg-danger' : 'bg-accent';
  return (
    <div
      role="progressbar"
      aria-label={label}
      aria-valuemin={0}
      aria-valuemax={100}
      aria-valuenow={percent ?? undefined}
      className="h-2 w-full overflow-hidden rounded-xs border border-line-strong bg-sunken"
    >
      {percent === null ? (
        <div className={cx('h-full w-full opacity-70', fill)} style={{ backgroundImage: 'repeating-linear-gradient(45deg, transparent 0 4px, var(--sf-sunken) 4px 8px)' }} />
      ) : (
        <div className={cx('h-full', fill)} style={{ width: `${Math.max(0, Math.min(100, percent))}%` }} />
      )}
    </div>
  );
}

function FileRow({ entry, busy, csvProblem, onStreamId, onRemove }: { entry: Entry; busy: boolean; csvProblem: string | null; onStreamId: (v: string) => void; onRemove: () => void }) {
  const s = entry.state;
  const streamInputId = useId();
  const pct = s.phase === 'uploading' ? Math.round((100 * s.sentBytes) / Math.max(1, s.totalBytes)) : s.phase === 'ready' ? 0 : 100;
  const status =
    s.phase === 'ready'
      ? 'Ready'
      : s.phase === 'uploading'
        ? `Uploading ${pct} %`
        : s.phase === 'analysing'
          ? 'Analysing…'
          : s.outcome.status === 'rejected'
            ? 'Refused'
            : s.outcome.status === 'duplicate'
              ? 'Already uploaded'
              : 'Done';
  return (
    <li className="flex flex-col gap-1.5 rounded-sm border border-line bg-surface px-3 py-2" data-file={entry.file.name}>
      <div className="flex flex-wrap items-center gap-3">
        <span className="font-mono">{entry.file.name}</span>
        <span className="text-sm text-ink-muted">{sizeWords(entry.file.size)}</span>
        <span className="text-sm" aria-live="polite">
          {status}
        </span>
        {s.phase === 'ready' && !busy ? (
          <Button size="sm" variant="quiet" onClick={onRemove} aria-label={`Remove ${entry.file.name}`}>
            Remove
          </Button>
        ) : null}
      </div>
      <ProgressBar
        label={`${entry.file.name}: ${status}`}
        percent={s.phase === 'analysing' ? null : pct}
        tone={s.phase === 'done' && s.outcome.status === 'rejected' ? 'danger' : 'accent'}
      />
      {s.phase === 'ready' && isCsvName(entry.file.name) ? (
        <div className="flex flex-col gap-1">
          <label htmlFor={streamInputId} className="text-sm font-medium">
            Stream id for this CSV file
          </label>
          <Input
            id={streamInputId}
            mono
            placeholder="XX.KV01.00.HHZ"
            value={entry.streamId}
            aria-invalid={csvProblem ? true : undefined}
            onChange={(ev) => onStreamId(ev.target.value)}
            className="max-w-xs"
          />
          {csvProblem ? <span className="text-sm text-danger">{csvProblem}</span> : null}
        </div>
      ) : null}
    </li>
  );
}
