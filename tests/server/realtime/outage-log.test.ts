import { Writable } from 'node:stream';
import { describe, expect, it } from 'vitest';
import { createLogger } from '@server/logger';
import { createOutageLog } from '@server/realtime/outage-log';

/** A logger writing parsed lines into an array. */
function captured() {
  const lines: Array<{ level: number; msg: string; outageS?: number; failures?: number; err?: { message?: string } }> = [];
  const logger = createLogger(
    'info',
    new Writable({
      write(chunk: Buffer, _enc, done) {
        for (const l of chunk.toString('utf8').split('\n')) if (l !== '') lines.push(JSON.parse(l));
        done();
      },
    }),
  );
  return { logger, lines };
}

describe('outage log', () => {
  it('logs an outage once at its start and once at its end, however many failures it has', () => {
    const { logger, lines } = captured();
    let t = 1_000_000;
    const outage = createOutageLog(logger, 'live hub: change log read', () => t);
    outage.ok(); // working all along: nothing to say
    expect(lines).toEqual([]);
    // A 12 s outage polled every second: 12 failures, one line.
    for (let i = 0; i < 12; i++) {
      outage.failed(new Error('connect ECONNREFUSED 127.0.0.1:3306'));
      t += 1000;
    }
    expect(outage.down()).toBe(true);
    expect(lines.map((l) => l.msg)).toEqual(['live hub: change log read failing; further failures are not logged until it works again']);
    expect(lines[0]?.level).toBe(40);
    expect(lines[0]?.err?.message).toContain('ECONNREFUSED');
    outage.ok();
    outage.ok();
    expect(outage.down()).toBe(false);
    expect(lines).toHaveLength(2);
    expect(lines[1]).toMatchObject({ level: 30, msg: 'live hub: change log read working again', outageS: 12, failures: 12 });
    // A second outage is a new pair of lines.
    outage.failed(new Error('again'));
    t += 2500;
    outage.failed(new Error('again'));
    outage.ok();
    expect(lines.map((l) => l.level)).toEqual([40, 30, 40, 30]);
    expect(lines[3]).toMatchObject({ outageS: 2.5, failures: 2 });
  });
});
