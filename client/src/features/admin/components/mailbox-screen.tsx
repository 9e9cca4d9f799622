import { Fragment, useState } from 'react';
import { Button } from '@client/components/ui/button';
import { EmptyState } from '@client/components/ui/empty-state';
import { Loading } from '@client/components/ui/skeleton';
import { mailboxPageSize, useMailbox, useMailMessage } from '@client/features/admin/api/admin';

/** Splits text into plain parts and http(s) links, so links in a mail are clickable. */
export function linkify(text: string): { text: string; href?: string }[] {
  const parts: { text: string; href?: string }[] = [];
  const re = /https?:\/\/[^\s<>"']+/g;
  let last = 0;
  for (let m = re.exec(text); m; m = re.exec(text)) {
    if (m.index > last) parts.push({ text: text.slice(last, m.index) });
    parts.push({ text: m[0], href: m[0] });
    last = m.index + m[0].length;
  }
  if (last < text.length) parts.push({ text: text.slice(last) });
  return parts;
}

function MessageView({ id }: { id: number }) {
  const msg = useMailMessage(id);
  if (msg.isPending) return <Loading label="Loading the message…" rows={4} />;
  if (msg.isError) return <EmptyState title="The message could not be loaded">{msg.error.message}</EmptyState>;
  const m = msg.data;
  return (
    <article aria-labelledby="mail-subject" className="flex flex-col gap-3">
      <h2 id="mail-subject" className="text-md font-semibold">
        {m.subject}
      </h2>
      <dl className="grid grid-cols-[auto_1fr] gap-x-3 gap-y-1 text-sm">
        <dt className="text-ink-muted">From</dt>
        <dd className="font-mono">{m.from ?? '—'}</dd>
        <dt className="text-ink-muted">To</dt>
        <dd className="font-mono">{m.to.join(', ')}</dd>
        <dt className="text-ink-muted">Received</dt>
        <dd className="font-mono">{m.receivedAt}</dd>
      </dl>
      {m.text !== null ? (
        <pre className="overflow-auto rounded-sm border border-line bg-raised p-3 font-mono text-sm whitespace-pre-wrap">
          {linkify(m.text).map((p, i) => (p.href ? <a key={i} href={p.href} className="underline underline-offset-2">{p.text}</a> : <Fragment key={i}>{p.text}</Fragment>))}
        </pre>
      ) : null}
      {m.html !== null ? (
        <details>
          <summary className="cursor-pointer text-sm">The HTML version, as a mail reader shows it</summary>
          {/* Sandboxed: no scripts, no same-origin access. */}
          <iframe title={`HTML version of “${m.subject}”`} sandbox="" srcDoc={m.html} className="mt-2 h-80 w-full rounded-sm border border-line bg-white" />
        </details>
      ) : null}
    </article>
  );
}

/**
 * The local mailbox (admins, only while the fake SMTP server is in use): every message Seisift
 * sent, newest first, so an invitation can be followed without a real mail account.
 */
export function MailboxScreen() {
  const [offset, setOffset] = useState(0);
  const [openId, setOpenId] = useState<number | null>(null);
  const list = useMailbox(offset);
  return (
    <div className="flex max-w-7xl flex-col gap-4">
      <header>
        <h1 className="text-xl font-semibold">Mailbox</h1>
        <p className="text-base text-ink-muted">Mail caught by the local test mail server. Nothing here reached a real inbox; with SMTP_URL set this page goes away.</p>
      </header>
      {list.isPending ? (
        <Loading label="Loading the mailbox…" rows={5} />
      ) : list.isError ? (
        <EmptyState title="The mailbox is not available">{list.error.message}</EmptyState>
      ) : list.data.messages.length === 0 ? (
        <EmptyState title="No mail yet">Invitations and password-reset links appear here as soon as they are sent.</EmptyState>
      ) : (
        <div className="grid gap-4 lg:grid-cols-[minmax(18rem,28rem)_1fr]">
          <nav aria-label="Messages" className="flex flex-col gap-2">
            <ul className="flex flex-col rounded-sm border border-line bg-surface">
              {list.data.messages.map((m) => (
                <li key={m.id} className="border-b border-line last:border-b-0">
                  <button
                    type="button"
                    aria-current={openId === m.id ? 'true' : undefined}
                    onClick={() => setOpenId(m.id)}
                    className={`flex w-full flex-col items-start gap-0.5 px-3 py-2 text-left ${openId === m.id ? 'bg-accent-wash shadow-[inset_3px_0_0_var(--sf-accent)]' : 'hover:bg-raised'}`}
                  >
                    <span className="font-medium">{m.subject}</span>
                    <span className="font-mono text-xs text-ink-muted">
                      {m.receivedAt} → {m.to.join(', ')}
                    </span>
                  </button>
                </li>
              ))}
            </ul>
            <div className="flex items-center gap-2 text-sm">
              <Button size="sm" disabled={offset === 0} onClick={() => setOffset(Math.max(0, offset - mailboxPageSize))}>
                Newer
              </Button>
              <span className="text-ink-muted">
                {offset + 1}–{Math.min(offset + mailboxPageSize, list.data.total)} of {list.data.total}
              </span>
              <Button size="sm" disabled={offset + mailboxPageSize >= list.data.total} onClick={() => setOffset(offset + mailboxPageSize)}>
                Older
              </Button>
            </div>
          </nav>
          <div className="min-w-0">{openId === null ? <p className="text-ink-muted">Choose a message to read it.</p> : <MessageView id={openId} />}</div>
        </div>
      )}
    </div>
  );
}
