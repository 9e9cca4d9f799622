/**
 * A small RFC 5322 / MIME reader for the messages the local fake SMTP server receives: headers
 * (unfolded, RFC 2047 encoded words decoded), multipart bodies (RFC 2046) and the
 * quoted-printable and base64 transfer encodings (RFC 2045 §6.7, §6.8). It reads what nodemailer
 * writes and other ordinary mail; it is not a general mail-client parser (no attachments kept).
 */

/** The parts of a message the mailbox page shows. */
export type ParsedMessage = {
  headers: Map<string, string>;
  subject: string;
  from: string | null;
  to: string | null;
  messageId: string | null;
  text: string | null;
  html: string | null;
};

function splitHead(raw: string): { head: string; body: string } {
  const m = /\r?\n\r?\n/.exec(raw);
  if (!m) return { head: raw, body: '' };
  return { head: raw.slice(0, m.index), body: raw.slice(m.index + m[0].length) };
}

function parseHeaders(head: string): Map<string, string> {
  const headers = new Map<string, string>();
  const unfolded = head.replace(/\r?\n[ \t]+/g, ' ');
  for (const line of unfolded.split(/\r?\n/)) {
    const colon = line.indexOf(':');
    if (colon <= 0) continue;
    const name = line.slice(0, colon).trim().toLowerCase();
    if (!headers.has(name)) headers.set(name, line.slice(colon + 1).trim());
  }
  return headers;
}

function decodeBytes(bytes: Uint8Array, charset: string): string {
  try {
    return new TextDecoder(charset || 'utf-8').decode(bytes);
  } catch {
    return new TextDecoder('utf-8').decode(bytes);
  }
}

/** Decodes quoted-printable text to bytes (RFC 2045 §6.7): `=XX` octets, `=` soft line breaks. */
export function decodeQuotedPrintable(input: string): Uint8Array {
  const text = input.replace(/=\r?\n/g, '');
  const out: number[] = [];
  for (let i = 0; i < text.length; i++) {
    const ch = text.charCodeAt(i);
    if (ch === 0x3d && /^[0-9A-Fa-f]{2}$/.test(text.slice(i + 1, i + 3))) {
      out.push(parseInt(text.slice(i + 1, i + 3), 16));
      i += 2;
    } else if (ch < 0x80) {
      out.push(ch);
    } else {
      out.push(...Buffer.from(text[i] ?? '', 'utf8'));
    }
  }
  return Uint8Array.from(out);
}

/** Decodes RFC 2047 encoded words (`=?charset?B|Q?text?=`) in a header value. */
export function decodeEncodedWords(value: string): string {
  return value
    .replace(/(=\?[^?]+\?[BbQq]\?[^?]*\?=)\s+(?==\?[^?]+\?[BbQq]\?[^?]*\?=)/g, '$1')
    .replace(/=\?([^?]+)\?([BbQq])\?([^?]*)\?=/g, (_all, charset: string, enc: string, text: string) => {
      const cs = charset.replace(/\*.*$/, '');
      const bytes = enc.toUpperCase() === 'B' ? Buffer.from(text, 'base64') : decodeQuotedPrintable(text.replace(/_/g, ' '));
      return decodeBytes(bytes, cs);
    });
}

function contentType(value: string | undefined): { type: string; params: Map<string, string> } {
  const [type = 'text/plain', ...rest] = (value ?? 'text/plain').split(';');
  const params = new Map<string, string>();
  for (const p of rest) {
    const eq = p.indexOf('=');
    if (eq < 0) continue;
    params.set(p.slice(0, eq).trim().toLowerCase(), p.slice(eq + 1).trim().replace(/^"(.*)"$/, '$1'));
  }
  return { type: type.trim().toLowerCase(), params };
}

function decodeBody(body: string, headers: Map<string, string>, charset: string): string {
  const enc = (headers.get('content-transfer-encoding') ?? '7bit').toLowerCase();
  if (enc === 'base64') return decodeBytes(Buffer.from(body.replace(/\s+/g, ''), 'base64'), charset);
  if (enc === 'quoted-printable') return decodeBytes(decodeQuotedPrintable(body), charset);
  return body;
}

function walk(raw: string, found: { text: string | null; html: string | null }, depth: number): Map<string, string> {
  const { head, body: rawBody } = splitHead(raw);
  let body = rawBody;
  const headers = parseHeaders(head);
  const ct = contentType(headers.get('content-type'));
  const disposition = (headers.get('content-disposition') ?? '').toLowerCase();
  if (ct.type.startsWith('multipart/') && depth < 8) {
    const boundary = ct.params.get('boundary');
    if (boundary) {
      const delimiter = `--${boundary}`;
      const chunks = body.split(new RegExp(`\\r?\\n?${delimiter.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}(?:--)?[ \\t]*\\r?\\n?`));
      // chunks[0] is the preamble, the last is the epilogue after the closing delimiter.
      for (const chunk of chunks.slice(1)) if (chunk.trim()) walk(chunk, found, depth + 1);
    }
    return headers;
  }
  if (disposition.startsWith('attachment')) return headers;
  // A single-part message ends with the line break that closes its last line (RFC 5321 §4.1.1.4).
  if (depth === 0) body = body.replace(/\r?\n$/, '');
  const charset = ct.params.get('charset') ?? 'utf-8';
  if (ct.type === 'text/plain' && found.text === null) found.text = decodeBody(body, headers, charset).replace(/\r\n/g, '\n');
  else if (ct.type === 'text/html' && found.html === null) found.html = decodeBody(body, headers, charset).replace(/\r\n/g, '\n');
  return headers;
}

/** Parses one message as received over SMTP (the DATA content, CRLF line ends). */
export function parseMessage(raw: string): ParsedMessage {
  const found = { text: null as string | null, html: null as string | null };
  const headers = walk(raw, found, 0);
  const header = (name: string) => {
    const v = headers.get(name);
    return v === undefined ? null : decodeEncodedWords(v);
  };
  return {
    headers,
    subject: header('subject') ?? '(no subject)',
    from: header('from'),
    to: header('to'),
    messageId: header('message-id'),
    text: found.text,
    html: found.html,
  };
}
