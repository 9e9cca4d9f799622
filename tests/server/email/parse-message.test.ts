/**
 * The fake server's MIME reader against messages composed by nodemailer's own MailComposer (an
 * independent implementation of RFC 5322/2045/2047), and against hand-written RFC examples.
 */
import MailComposer from 'nodemailer/lib/mail-composer';
import { describe, expect, it } from 'vitest';
import { decodeEncodedWords, decodeQuotedPrintable, parseMessage } from '@server/email/parse-message';

async function compose(opts: { subject: string; text: string; html?: string; to?: string }): Promise<string> {
  const buf = await new MailComposer({ from: 'Seisift <seisift@kestrel.example>', to: opts.to ?? 'a@kestrel.example', subject: opts.subject, text: opts.text, html: opts.html }).compile().build();
  return buf.toString('utf8');
}

describe('parseMessage', () => {
  it('reads subject, addresses and both bodies of a multipart/alternative message with non-ASCII text', async () => {
    const text = 'Grüße from the Kestrel Valley — a line that is long enough to be wrapped by quoted-printable soft breaks somewhere past seventy-six characters.\nhttp://127.0.0.1:3000/welcome#token=AbC_dEf-0123456789abcdefghijklmnopqrstuvwxy';
    const raw = await compose({ subject: 'Einladung: Seisift für Sie', text, html: `<p>${text}</p>` });
    const m = parseMessage(raw);
    expect(m.subject).toBe('Einladung: Seisift für Sie');
    expect(m.to).toBe('a@kestrel.example');
    expect(m.from).toBe('Seisift <seisift@kestrel.example>');
    expect(m.text).toBe(text);
    expect(m.html).toBe(`<p>${text}</p>`);
    expect(m.messageId).toMatch(/^<.+@.+>$/);
  });

  it('reads a plain ASCII single-part message', async () => {
    const m = parseMessage(await compose({ subject: 'plain', text: 'hello\nworld' }));
    expect(m.text).toBe('hello\nworld');
    expect(m.html).toBeNull();
  });

  it('decodes RFC 2047 encoded words (B and Q), joining adjacent ones', () => {
    // RFC 2047 §8 examples.
    expect(decodeEncodedWords('=?ISO-8859-1?Q?a?= =?ISO-8859-1?Q?b?=')).toBe('ab');
    expect(decodeEncodedWords('=?ISO-8859-1?Q?a_b?=')).toBe('a b');
    expect(decodeEncodedWords('(=?ISO-8859-1?Q?a?= b)')).toBe('(a b)');
    expect(decodeEncodedWords('=?UTF-8?B?R3LDvMOfZQ==?=')).toBe('Grüße');
  });

  it('decodes quoted-printable octets and soft line breaks (RFC 2045 §6.7)', () => {
    expect(Buffer.from(decodeQuotedPrintable('caf=C3=A9 =\r\nau lait')).toString('utf8')).toBe('café au lait');
    expect(Buffer.from(decodeQuotedPrintable('a=3Db')).toString('utf8')).toBe('a=b');
  });
});
