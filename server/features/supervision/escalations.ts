import { eq, inArray } from 'drizzle-orm';
import { storedAnalysisSchema } from '@shared/schemas/analysis';
import type { Escalation } from '@shared/schemas/label';
import type { QueueRow } from '@shared/schemas/queue';
import type { Database } from '@server/db/client';
import { inboxEntries } from '@server/db/schema/supervisor';
import { windows } from '@server/db/schema/uploads';
import { queueItems } from '@server/db/schema/queue-items';
import type { Mailer } from '@server/email/mailer';
import type { Logger } from '@server/logger';
import { activeSupervisors, recordInboxChange } from './inbox';
import type { EscalationListener, QueuePerson } from '@server/features/queue/queue-transitions';

/**
 * What happens after an analyst escalates an item (hooked into the queue's escalate service as an
 * EscalationListener, after its commit): every active supervisor gets an inbox entry (one
 * transaction, `inbox` change-log rows last, then the hub is woken) and an e-mail through the
 * app's mailer with the stream, the window time and the flag in the subject and a link to the item
 * (`SEISIFT_PUBLIC_URL` + `/queue/items/:id`). A mail that cannot be sent is noted on the entry
 * (`mailError`); the inbox entry stands either way.
 */

/** What the escalation hook needs. */
export interface EscalationDeps {
  db: Database;
  mailer: Mailer;
  logger: Logger;
  notify?: () => void;
  /** Base URL of the app as people reach it (SEISIFT_PUBLIC_URL), without a trailing slash. */
  publicUrl: string;
}

/** The e-mail subject of an escalation: stream, window time and flag. */
export function escalationSubject(streamId: string, windowStart: string, flag: string): string {
  return `Escalated: ${streamId} ${windowStart} (${flag})`;
}

/** The link to an item in the app. */
export function itemLink(publicUrl: string, itemId: number): string {
  return `${publicUrl.replace(/\/+$/, '')}/queue/items/${itemId}`;
}

const htmlEscape = (s: string) => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');

/** The one field of the stored analysis (shared/schemas/analysis.ts) the e-mail subject needs. */
const leadChannelSchema = storedAnalysisSchema.pick({ leadChannel: true });

/** The lead stream id of an item's window (from the analysis), else NET.STA of the row. */
async function leadStream(db: Database, itemId: number, fallback: string): Promise<string> {
  const [row] = await db.select({ analysis: windows.analysis }).from(queueItems).innerJoin(windows, eq(windows.id, queueItems.windowId)).where(eq(queueItems.id, itemId));
  const parsed = leadChannelSchema.safeParse(row?.analysis);
  return parsed.success && parsed.data.leadChannel !== '' ? parsed.data.leadChannel : fallback;
}

/**
 * Fans an escalation out to the supervisors (see the module comment).
 * @returns the inbox entry ids created
 */
export async function fanOutEscalation(deps: EscalationDeps, row: QueueRow, escalation: Escalation, actor: QueuePerson): Promise<number[]> {
  const supervisors = await activeSupervisors(deps.db);
  if (supervisors.length === 0) {
    deps.logger.warn({ itemId: row.id }, 'escalation with no active supervisor to tell');
    return [];
  }
  const stream = await leadStream(deps.db, row.id, row.station);
  const subject = escalationSubject(stream, row.windowStart, row.flag);
  const link = itemLink(deps.publicUrl, row.id);
  const now = new Date();
  const ids = await deps.db.transaction(async (tx) => {
    const created: Array<{ id: number; userId: string }> = [];
    for (const s of supervisors) {
      const [ins] = await tx
        .insert(inboxEntries)
        .values({ userId: s.id, itemId: row.id, reason: escalation.reason, escalatedByUserId: actor.id, subject: subject.slice(0, 300), createdAt: now })
        .$returningId();
      if (!ins) throw new Error('inbox entry insert returned no id');
      created.push({ id: ins.id, userId: s.id });
    }
    for (const c of created) await recordInboxChange(tx, c.id, c.userId, 'created');
    return created;
  });
  deps.notify?.();
  const failed: number[] = [];
  for (const [i, s] of supervisors.entries()) {
    const text = [
      `${actor.displayName} escalated an item to the network supervisors.`,
      '',
      `Stream: ${stream}`,
      `Window start: ${row.windowStart} (UTC)`,
      `Automatic flag: ${row.flag}, score ${row.score}`,
      `Reason: ${escalation.reason}`,
      '',
      `Open it: ${link}`,
      '',
      'Automatic scores need an analyst’s review; public warnings follow the network’s own procedures and local authorities.',
    ].join('\n');
    const html = `<p>${htmlEscape(actor.displayName)} escalated an item to the network supervisors.</p><ul><li>Stream: ${htmlEscape(stream)}</li><li>Window start: ${htmlEscape(row.windowStart)} (UTC)</li><li>Automatic flag: ${htmlEscape(row.flag)}, score ${row.score}</li><li>Reason: ${htmlEscape(escalation.reason)}</li></ul><p><a href="${htmlEscape(link)}">Open item ${row.id}</a></p><p>Automatic scores need an analyst’s review; public warnings follow the network’s own procedures and local authorities.</p>`;
    try {
      await deps.mailer.send({ to: s.email, subject, text, html });
    } catch (err) {
      const entry = ids[i];
      if (entry) failed.push(entry.id);
      deps.logger.error({ err, itemId: row.id, to: s.email }, 'escalation e-mail failed');
    }
  }
  if (failed.length > 0) await deps.db.update(inboxEntries).set({ mailError: 'the e-mail could not be sent; see the server log' }).where(inArray(inboxEntries.id, failed));
  return ids.map((c) => c.id);
}

/** The escalation hook for the queue router's `escalationListeners`. */
export function escalationListener(deps: EscalationDeps): EscalationListener {
  return async (row, escalation, actor) => {
    await fanOutEscalation(deps, row, escalation, actor);
  };
}
