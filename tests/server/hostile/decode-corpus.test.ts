import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { decodeWaveform } from '../../../server/formats/decode';
import { WaveformParseError } from '../../../server/formats/types';
import { makeHostileCorpus } from '../../fixtures/hostile/make-corpus';

/**
 * The hostile corpus (tests/fixtures/hostile/make-corpus.ts) through decodeWaveform: every file the
 * corpus marks `decoder` is refused with a WaveformParseError whose message names the problem
 * (the expected wording per case below; header field meanings per FDSN SEED manual 2.4 ch. 8 and
 * the miniSEED 3 specification), never the decoder's "internal decoder error" safety net and never
 * another exception type. The property-based mutation tests of the decoder itself live in
 * tests/server/formats/decode-fuzz.test.ts; this file pins the named cases the API tests reuse.
 */

const expectedReason: Record<string, RegExp> = {
  'zero-length': /empty file/,
  'zero-length-csv': /empty file/,
  'truncated-in-header': /truncated.*48-byte fixed header/,
  'truncated-in-record': /record 4 .*truncated.*512 bytes but only 200 remain/,
  'truncated-ms3': /miniSEED 3 .*truncated/,
  'bit-flipped-ms3-data': /CRC-32C mismatch/,
  'bit-flipped-steim-control': /invalid Steim-2 sub-code/,
  'bit-flipped-integration-constant': /reverse integration constant/,
  'lying-sample-count': /declares 60000 samples/,
  'lying-sample-count-int32': /declares 65535 int32 samples/,
  'lying-record-length': /record length of 4096 bytes but only 2048 remain/,
  'huge-record-length': /record length 2\^31 bytes is outside/,
  'huge-record-length-255': /record length 2\^255 bytes is outside/,
  'lying-encoding-unknown': /encoding 99 is not supported/,
  'lying-encoding-steim3': /Steim-3\) is not supported/,
  'lying-data-offset': /beginning of data 600 lies outside the record/,
  'lying-blockette-offset': /blockette offset 8 points inside/,
  'lying-ms3-sample-count': /declares 4294967295 samples/,
  'lying-ms3-data-length': /truncated.*data 2147483647/,
  'ms3-zero-rate': /sample rate is 0/,
  'mseed2-nan-samples': /sample 11 is NaN/,
  'mixed-sample-rates': /changes sample rate from 100 Hz to 50 Hz/,
  'random-binary': /unrecognised format/,
  'mseed2-header-then-garbage': /implausible/,
  'csv-text-cell': /line 1237, column 2.*'twelve' is not a finite number/,
  'csv-nan': /'NaN' is not a finite number/,
  'csv-infinity': /'Infinity' is not a finite number/,
  'csv-huge-exponent': /'1e400' is not a finite number/,
  'csv-mixed-sample-rates': /line 1503.*irregular sampling/,
  'csv-one-row': /at least 2 are needed/,
  'csv-no-stream-id': /no stream id/,
  'csv-three-columns': /3 columns/,
  'csv-control-chars': /unrecognised format/,
  'absurd-declared-count-csv-header': /at least 2 are needed/,
};

const digest = (bytes: Uint8Array) => createHash('sha256').update(bytes).digest('hex');

describe('hostile corpus → decodeWaveform', () => {
  const corpus = makeHostileCorpus();

  it('is deterministic and covers every kind of damage the issue lists', () => {
    const again = makeHostileCorpus();
    expect(again.map((c) => `${c.name}:${digest(c.bytes)}`)).toEqual(corpus.map((c) => `${c.name}:${digest(c.bytes)}`));
    const names = corpus.map((c) => c.name).join(' ');
    for (const kind of ['truncated', 'bit-flipped', 'lying-record-length', 'lying-sample-count', 'lying-encoding', 'huge-record-length', 'zero-length', 'csv-text', 'csv-nan', 'csv-infinity', 'mixed-sample-rates']) {
      expect(names).toContain(kind);
    }
  });

  for (const c of corpus) {
    it(`${c.name}: ${c.why}`, () => {
      let thrown: unknown;
      try {
        const streams = decodeWaveform(c.bytes, { filename: c.filename });
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
