import { useEffect, useId, useState } from 'react';
import { z } from 'zod';
import { lazySchema } from '@shared/schemas/lazy-schema';
import { cx } from '@client/lib/cx';
import { Input } from './input';

/** The example every UTC time field shows (placeholder and error text). */
export const utcTimePlaceholder = '2026-03-14T00:00Z';

// Date, then optionally a time after "T" or spaces (RFC 3339 §5.6 lets a space stand for the T
// "for the sake of readability"), with an optional "Z": the field itself says UTC.
const utcTimePattern = /^(\d{4})-(\d{2})-(\d{2})(?:(?:T| +)(\d{2}):(\d{2})(?::(\d{2})(?:\.(\d{1,3}))?)?Z?)?$/;

/**
 * A UTC time typed as ISO 8601 text (the form used everywhere else in Seisift), parsed to the full
 * ISO string with milliseconds. Accepted: `2026-03-14` (that UTC day at 00:00),
 * `2026-03-14T09:26Z`, `2026-03-14T09:26:53Z`, `2026-03-14T09:26:53.589Z`, and the same with a
 * space in place of the `T` (`2026-03-14 12:00`, as RFC 3339 §5.6 allows) or without the `Z`: the
 * field is labelled UTC, so a time without a zone is read as UTC, never as the browser's local
 * time. Leading/trailing spaces are ignored, and a lower-case `t`/`z` is taken as upper case.
 * Offsets (`+01:00`) are refused rather than converted, and the day must exist (2026-02-30 is refused).
 */
export const utcTimeTextSchema = lazySchema(() =>
  z
    .string()
    .transform((s) => s.trim().toUpperCase())
    .superRefine((s, ctx) => {
      if (s === '') {
        ctx.addIssue({ code: 'custom', message: `Enter a UTC time, e.g. ${utcTimePlaceholder}` });
        return;
      }
      const m = utcTimePattern.exec(s);
      if (!m) {
        ctx.addIssue({ code: 'custom', message: `Not a UTC time: use ${utcTimePlaceholder} (or a day, ${utcTimePlaceholder.slice(0, 10)})` });
        return;
      }
      const [y, mo, d, h = '0', mi = '0', sec = '0'] = m.slice(1);
      if (Number(h) > 23 || Number(mi) > 59 || Number(sec) > 59) {
        ctx.addIssue({ code: 'custom', message: `${s.slice(10).replace(/^[T ]+/, '').replace(/Z$/, '')} is not a time of day (00:00 to 23:59:59)` });
        return;
      }
      const back = new Date(Date.UTC(Number(y), Number(mo) - 1, Number(d)));
      if (back.getUTCFullYear() !== Number(y) || back.getUTCMonth() !== Number(mo) - 1 || back.getUTCDate() !== Number(d)) {
        ctx.addIssue({ code: 'custom', message: `${y}-${mo}-${d} is not a day of the calendar` });
      }
    })
    .transform((s) => {
      const [y, mo, d, h = '0', mi = '0', sec = '0', frac = ''] = (utcTimePattern.exec(s) ?? []).slice(1);
      // Built from the fields with Date.UTC, so no string is ever handed to the local-time parser.
      return new Date(Date.UTC(Number(y), Number(mo) - 1, Number(d), Number(h), Number(mi), Number(sec), Number(frac.padEnd(3, '0')))).toISOString();
    }),
);

/**
 * Parses typed text as a UTC time.
 * @returns `{ ok: true, iso }` (ISO 8601 with milliseconds, e.g. "2026-03-14T00:00:00.000Z") or
 *   `{ ok: false, message }` naming the problem
 */
export function parseUtcTimeText(text: string): { ok: true; iso: string } | { ok: false; message: string } {
  const r = utcTimeTextSchema.safeParse(text);
  if (r.success) return { ok: true, iso: r.data };
  return { ok: false, message: r.error.issues[0]?.message ?? 'Not a UTC time' };
}

/**
 * How a UTC time is shown in the field: minutes when seconds and milliseconds are zero
 * ("2026-03-14T00:00Z"), else seconds, else milliseconds.
 * @param iso any string Date.parse reads; returned unchanged when it is not a time
 */
export function formatUtcTimeText(iso: string): string {
  const t = Date.parse(iso);
  if (Number.isNaN(t)) return iso;
  const full = new Date(t).toISOString();
  if (full.endsWith(':00.000Z')) return `${full.slice(0, 16)}Z`;
  if (full.endsWith('.000Z')) return `${full.slice(0, 19)}Z`;
  return full;
}

/** Props of <UtcTimeInput>: a required time, or (`optional`) one that may be left empty. */
export type UtcTimeInputProps = {
  label: string;
  /** Extra error from the form (e.g. "must be before To"), shown when the text itself is valid. */
  error?: string;
  className?: string;
} & (
  | {
      optional?: false;
      /** The current time, ISO 8601 UTC. */
      value: string;
      /** Called with the parsed ISO time whenever the text is a valid UTC time (not on invalid text). */
      onChange: (iso: string) => void;
    }
  | {
      /** Empty text is allowed and means "no time" (e.g. an open end of a filter). */
      optional: true;
      value: string | undefined;
      /** Called with the parsed ISO time, or undefined when the field is emptied. */
      onChange: (iso: string | undefined) => void;
    }
);

/**
 * A labelled text field for a UTC time in ISO 8601 (in place of the browser's date picker, which
 * shows the reader's locale and time zone). Plex Mono, placeholder `2026-03-14T00:00Z`; invalid
 * text shows its error under the field (aria-invalid + aria-describedby) and keeps the last valid
 * value upstream. Follows `value` when it changes from outside. With `optional`, empty text is
 * valid and reported as undefined.
 */
export function UtcTimeInput(props: UtcTimeInputProps) {
  const { label, value, error, className } = props;
  const id = useId();
  const [text, setText] = useState(() => (value === undefined ? '' : formatUtcTimeText(value)));
  const empty = text.trim() === '';
  const parsed = props.optional && empty ? null : parseUtcTimeText(text);
  useEffect(() => {
    // A new value from outside (a default arriving, a reset): show it unless the text already says so.
    setText((t) => {
      if (value === undefined) return t.trim() === '' ? t : '';
      const p = parseUtcTimeText(t);
      return p.ok && Date.parse(p.iso) === Date.parse(value) ? t : formatUtcTimeText(value);
    });
  }, [value]);
  const message = parsed === null || parsed.ok ? error : parsed.message;
  const errorId = message ? `${id}-error` : undefined;
  const onText = (next: string) => {
    setText(next);
    if (props.optional && next.trim() === '') {
      props.onChange(undefined);
      return;
    }
    const p = parseUtcTimeText(next);
    if (p.ok) props.onChange(p.iso);
  };
  return (
    <div className={cx('flex flex-col gap-1', className)}>
      <label htmlFor={id} className="text-sm">
        {label}
      </label>
      <Input
        id={id}
        mono
        type="text"
        inputMode="text"
        autoComplete="off"
        spellCheck={false}
        placeholder={utcTimePlaceholder}
        className="w-48"
        value={text}
        aria-invalid={message ? true : undefined}
        aria-describedby={errorId}
        onChange={(e) => onText(e.target.value)}
      />
      {message ? (
        <p id={errorId} className="flex max-w-64 items-center gap-1 text-sm text-danger">
          <span aria-hidden="true" className="font-mono font-semibold">
            !
          </span>
          {message}
        </p>
      ) : null}
    </div>
  );
}
