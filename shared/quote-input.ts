/**
 * Quoting someone's input in a refusal message. A message names the bad value so people can find
 * it, but never echoes more than about a line of it: a 1 MB CSV cell, a long file name or a
 * crafted URL must not come back whole (in the answer, the logs or the upload outcome).
 */

/** The most characters of one input a message quotes. */
export const MAX_QUOTED_CHARS = 80;

/** Longest refusal message passed on from a parser, characters (a safety net behind `quoteInput`). */
export const MAX_MESSAGE_CHARS = 600;

/**
 * `value` cut to at most `max` characters (whole code points): when longer, its first part, an
 * ellipsis and how many characters were left out, e.g. `abc… (+1 200 characters)`; control
 * characters are shown as `\uXXXX` so a message stays one readable line.
 * @param keepEnd characters kept from the end as well (e.g. 12 for file names, so the extension shows)
 */
export function clipInput(value: string, max = MAX_QUOTED_CHARS, keepEnd = 0): string {
  // eslint-disable-next-line no-control-regex
  const visible = (s: string) => s.replace(/[\u0000-\u001f\u007f-\u009f]/g, (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`);
  const chars = [...value];
  if (chars.length <= max) return visible(value);
  const tail = Math.min(keepEnd, max - 1);
  const head = max - tail;
  const left = chars.length - max;
  return `${visible(chars.slice(0, head).join(''))}… (+${left} characters)${tail > 0 ? ` …${visible(chars.slice(chars.length - tail).join(''))}` : ''}`;
}

/** `value` in single quotes for a message, cut by `clipInput`. */
export function quoteInput(value: string, max = MAX_QUOTED_CHARS): string {
  return `'${clipInput(value, max)}'`;
}

/** A parser's message, shortened to `MAX_MESSAGE_CHARS` when a quoted part slipped through uncut. */
export function capMessage(message: string): string {
  return clipInput(message, MAX_MESSAGE_CHARS);
}
