import { useCallback, useId, useRef, useState, type DragEvent } from 'react';
import { Link } from 'react-router';
import type { UploadOutcome } from '@shared/schemas/upload';
import { Badge } from '@client/components/ui/badge';
import { Button } from '@client/components/ui/button';
import { FlagMarker } from '@client/components/ui/flag-marker';
import { Input } from '@client/components/ui/input';
import { ScrollTable, Td, Th, Tr } from '@client/components/ui/table';
import { TriageCaution } from '@client/components/ui/triage-caution';
import { paths } from '@client/config/paths';
import { cx } from '@client/lib/cx';
import { uploadFile, type UploadProgress } from '@client/features/uploads/api/upload-file';
import { csvFieldProblems, PEEK_BYTES, peekWaveformFile, type CsvFieldProblems, type FilePeek } from '@client/features/uploads/lib/peek-file';

/** One file on the page, from picking to its outcome. */
type Entry = {
  key: string;
  file: File;
  /** What the file is, read from its first bytes (null while reading). */
  peek: FilePeek | null;
  streamId: string;
  startTime: string;
  state: { phase: 'ready' } | UploadProgress | { phase: 'done'; outcome: UploadOutcome };
};

/** The fields a file still needs (see csvFieldProblems). */
const csvProblems = (e: Entry): CsvFieldProblems => csvFieldProblems(e.peek, e.streamId, e.startTime);

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

  const update = (key: string, patch: Partial<Entry>) => setEntries((prev) => prev.map((e) => (e.key === key ? { ...e, ...patch } : e)));

  const add = useCallback((files: FileList | File[]) => {
    const list = Array.from(files).map((file) => ({ key: `f${++counter.current}`, file, peek: null, streamId: '', startTime: '', state: { phase: 'ready' } as const }));
    setEntries((prev) => [...prev.filter((e) => e.state.phase !== 'done'), ...list]);
    // Judge each file by its first bytes (a CSV named .mseed gets its fields; MiniSEED needs none).
    for (const e of list) {
      void e.file
        .slice(0, PEEK_BYTES)
        .arrayBuffer()
        .then(
          (buf) => peekWaveformFile(new Uint8Array(buf)),
          (): FilePeek => ({ kind: 'other' }),
        )
        .then((peek) => setEntries((prev) => prev.map((x) => (x.key === e.key ? { ...x, peek } : x))));
    }
  }, []);

  const ready = entries.filter((e) => e.state.phase === 'ready');
  const blocked = ready.some((e) => e.peek === null || csvProblems(e) !== null);

  const send = async () => {
    setBusy(true);
    for (const e of ready) {
      const csv = e.peek?.kind === 'csv';
      const outcome = await uploadFile(e.file, {
        ...(csv && e.streamId.trim() ? { streamId: e.streamId.trim() } : {}),
        ...(csv && e.startTime.trim() ? { startTime: e.startTime.trim() } : {}),
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
          MiniSEED 2, MiniSEED 3 or CSV (<span className="font-mono">t_seconds,counts</span>). Each file is decoded, checked and analysed; every station window in it becomes one queue item. A CSV file asks for its stream id and start time only when it does not give them itself.
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
              <FileRow
                key={e.key}
                entry={e}
                busy={busy}
                problems={csvProblems(e)}
                onStreamId={(v) => update(e.key, { streamId: v })}
                onStartTime={(v) => update(e.key, { startTime: v })}
                onRemove={() => setEntries((prev) => prev.filter((x) => x.key !== e.key))}
              />
            ))}
          </ul>
          {busy || ready.length > 0 ? (
            <div className="flex items-center gap-3">
              <Button variant="primary" disabled={busy || blocked} onClick={() => void send()}>
                {busy ? 'Uploading…' : `Upload ${ready.length} file${ready.length === 1 ? '' : 's'}`}
              </Button>
              {blocked ? <span className="text-sm text-danger">{ready.some((e) => e.peek === null) ? 'Reading the files…' : 'Complete the fields of every CSV file first.'}</span> : null}
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
          <ScrollTable
            label="Upload results" caption="Outcome of each uploaded file" captionHidden
            head={
              <Tr>
                <Th>File</Th>
                <Th>Outcome</Th>
                <Th>Queue items</Th>
              </Tr>
            }
          >
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
          </ScrollTable>
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

function FileRow({
  entry,
  busy,
  problems,
  onStreamId,
  onStartTime,
  onRemove,
}: {
  entry: Entry;
  busy: boolean;
  problems: CsvFieldProblems;
  onStreamId: (v: string) => void;
  onStartTime: (v: string) => void;
  onRemove: () => void;
}) {
  const s = entry.state;
  const streamInputId = useId();
  const startInputId = useId();
  const peek = entry.peek;
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
      {s.phase === 'ready' && peek?.kind === 'csv' ? (
        <div className="flex flex-wrap gap-4">
          <div className="flex flex-col gap-1">
            <label htmlFor={streamInputId} className="text-sm font-medium">
              {peek.streamId ? 'Stream id (optional: the file names one)' : 'Stream id for this CSV file'}
            </label>
            <Input
              id={streamInputId}
              mono
              placeholder={peek.streamId ?? 'XX.KV01.00.HHZ'}
              value={entry.streamId}
              aria-invalid={problems?.streamId ? true : undefined}
              onChange={(ev) => onStreamId(ev.target.value)}
              className="max-w-xs"
            />
            {problems?.streamId ? <span className="text-sm text-danger">{problems.streamId}</span> : peek.streamId ? <span className="text-sm text-ink-muted">From the file: <span className="font-mono">{peek.streamId}</span></span> : null}
          </div>
          {peek.relativeTimes ? (
            <div className="flex flex-col gap-1">
              <label htmlFor={startInputId} className="text-sm font-medium">
                {peek.start ? 'Start time, UTC (optional: the file gives one)' : 'Start time, UTC (the times are seconds from it)'}
              </label>
              <Input
                id={startInputId}
                mono
                placeholder={peek.start ?? '2026-03-14T09:26:00Z'}
                value={entry.startTime}
                aria-invalid={problems?.startTime ? true : undefined}
                onChange={(ev) => onStartTime(ev.target.value)}
                className="max-w-xs"
              />
              {problems?.startTime ? <span className="text-sm text-danger">{problems.startTime}</span> : peek.start ? <span className="text-sm text-ink-muted">From the file: <span className="font-mono">{peek.start}</span></span> : null}
            </div>
          ) : null}
        </div>
      ) : null}
    </li>
  );
}
