/** Escapes text for HTML element content and attribute values. */
export function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c] ?? c);
}

/** A rendered message: subject, plain text and HTML. */
export type RenderedMail = { subject: string; text: string; html: string };

/**
 * Wraps paragraphs and one action link in Seisift's plain mail layout. Text and HTML carry the
 * same words; the link is written out in full in both, so it works in text-only mail readers.
 */
export function renderMail(opts: { subject: string; greeting: string; paragraphs: string[]; link: { label: string; href: string }; footer: string }): RenderedMail {
  const text = [opts.greeting, '', ...opts.paragraphs.flatMap((p) => [p, '']), `${opts.link.label}: ${opts.link.href}`, '', opts.footer, ''].join('\n');
  const html = [
    '<!doctype html><html><body style="font-family: sans-serif; line-height: 1.5; color: #1b1f24">',
    `<p>${escapeHtml(opts.greeting)}</p>`,
    ...opts.paragraphs.map((p) => `<p>${escapeHtml(p)}</p>`),
    `<p><a href="${escapeHtml(opts.link.href)}">${escapeHtml(opts.link.label)}</a></p>`,
    `<p style="font-family: monospace; font-size: 12px; word-break: break-all">${escapeHtml(opts.link.href)}</p>`,
    `<p style="font-size: 12px; color: #555">${escapeHtml(opts.footer)}</p>`,
    '</body></html>',
  ].join('\n');
  return { subject: opts.subject, text, html };
}
