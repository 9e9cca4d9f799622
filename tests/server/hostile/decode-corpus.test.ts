import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { decodeWaveform } from '@server/formats/decode';
import { WaveformParseError } from '@server/formats/types';
import { expectedReason, makeHostileCorpus, makeRepairableCorpus } from '@tests/fixtures/hostile/make-corpus';

/**
 * The hostile corpus (tests/fixtures/hostile/make-corpus.ts) through decodeWaveform: every file the
 * corpus marks `decoder` is refused with a WaveformParseError whose message names the problem
 * (the expected wording per case below; header field meanings per FDSN SEED manual 2.4 ch. 8 and
 * the miniSEED 3 specification), never the decoder's "internal decoder error" safety net and never
 * another exception type (expected wording: `expectedReason` in make-corpus.ts). The property-based mutation tests of the decoder itself live in
 * tests/server/formats/decode-fuzz.test.ts; this file pins the named cases the API tests reuse.
 * Decoded with `exactPlacement`, as the ingest does, so gaps and true overlaps are refused here too.
 * The repairable cases (a repeated record, a re-sent overlap, an empty record, zero padding, quoted
 * CSV, CSV named .mseed) must decode to exactly the samples of their clean twin, with the notes.
 */


const digest = (bytes: Uint8Array) => createHash('sha256').update(bytes).digest('hex');

describe('hostile corpus → decodeWaveform', () => {
  const corpus = makeHostileCorpus();

  it('is deterministic and covers every kind of damage the issue lists', () => {
    const again = makeHostileCorpus();
    expect(again.map((c) => `${c.name}:${digest(c.bytes)}`)).toEqual(corpus.map((c) => `${c.name}:${digest(c.bytes)}`));
    const names = corpus.map((c) => c.name).join(' ');
    for (const kind of ['truncated', 'bit-flipped', 'lying-record-length', 'lying-sample-count', 'lying-encoding', 'huge-record-length', 'zero-length', 'csv-text', 'csv-nan', 'csv-infinity', 'mixed-sample-rates', 'gap', 'overlap-conflict', 'empty-record', 'location-nonascii', 'empty-network', 'empty-station', 'zip', 'gzip', 'stationxml', 'plain-text']) {
      expect(names).toContain(kind);
    }
  });

  for (const c of corpus) {
    it(`${c.name}: ${c.why}`, () => {
      let thrown: unknown;
      try {
        const streams = decodeWaveform(c.bytes, { filename: c.filename, exactPlacement: true });
        if (c.refusedBy === 'decoder') throw new Error(`decoded ${streams.length} stream(s) from a file that must be refused`);
        return; // 'either': a valid structure, refused later by the analysis (API test)
      } catch (err) {
        thrown = err;
      }
      expect(thrown).toBeInstanceOf(WaveformParseError);
      const message = thrown instanceof Error ? thrown.message : '';
      expect(message.startsWith(`${c.filename}: `)).toBe(true);
      expect(message).not.toMatch(/internal decoder error/);
      const want = expectedReason[c.name];
      if (!want) throw new Error(`no expected reason recorded for corpus case ${c.name}`);
      expect(message).toMatch(want);
    });
  }
});

describe('repairable corpus → decodeWaveform (exact placement)', () => {
  for (const c of makeRepairableCorpus()) {
    it(`${c.name}: ${c.why} → the clean twin's samples, notes ${c.notes.join(', ') || 'none'}`, () => {
      const got = decodeWaveform(c.bytes, { filename: c.filename, exactPlacement: true });
      const want = decodeWaveform(c.clean, { filename: c.cleanFilename, exactPlacement: true });
      expect(got.map((s) => [s.id, s.startTimeUs, s.sampleRateHz, s.discontinuities.length])).toEqual(want.map((s) => [s.id, s.startTimeUs, s.sampleRateHz, 0]));
      got.forEach((s, k) => expect(Array.from(s.samples)).toEqual(Array.from(want[k]?.samples ?? [])));
      expect(got.flatMap((s) => (s.notes ?? []).map((n) => n.code))).toEqual(c.notes);
    });
  }
});
