import { describe, expect, expectTypeOf, it } from 'vitest';
import { defaultProcessingProfile } from '@shared/schemas/processing-profile';
import { storedAnalysisSchema, type StoredAnalysis, type StoredChannelResult } from '@shared/schemas/analysis';
import { analyzeWindow, type AnalysisResult, type ChannelResult } from '@server/dsp/pipeline';
import { syntheticStreams } from '@tests/setup/queue-fixtures';

describe('the stored analysis schema (shared/schemas/analysis.ts)', () => {
  it("fits the engine's result type, field for field (checked by tsc in npm test)", () => {
    // Every result the engine returns is a valid stored analysis…
    expectTypeOf<AnalysisResult>().toExtend<StoredAnalysis>();
    expectTypeOf<ChannelResult>().toExtend<StoredChannelResult>();
    // …and the schema names every field the engine writes (a new engine field must be added here).
    expectTypeOf<Exclude<keyof AnalysisResult, keyof StoredAnalysis>>().toEqualTypeOf<never>();
    expectTypeOf<Exclude<keyof ChannelResult, keyof StoredChannelResult>>().toEqualTypeOf<never>();
    expectTypeOf<Exclude<keyof ChannelResult['staLta'], keyof StoredChannelResult['staLta']>>().toEqualTypeOf<never>();
  });

  it("parses what the engine returns, with and without the display curves", () => {
    const streams = syntheticStreams('KV01', Date.UTC(2026, 2, 14, 9, 0, 0) * 1000, { burstAtS: 40, durationS: 90 });
    for (const display of [false, true]) {
      const result = analyzeWindow(streams, defaultProcessingProfile, { display });
      const parsed = storedAnalysisSchema.safeParse(JSON.parse(JSON.stringify(result)));
      expect(parsed.success, parsed.error?.message).toBe(true);
    }
  });

  it('parses an analysis stored before the engine had detections, AIC onsets, onset SNR and signal spectra', () => {
    const streams = syntheticStreams('KV02', Date.UTC(2026, 2, 14, 9, 0, 0) * 1000, { burstAtS: 40, durationS: 90 });
    const older = JSON.parse(JSON.stringify(analyzeWindow(streams, defaultProcessingProfile))) as Record<string, unknown> & { channels: Array<Record<string, unknown> & { staLta: Record<string, unknown> & { triggers: Array<Record<string, unknown>> } }> };
    delete older.detection;
    for (const ch of older.channels) {
      delete ch.onsetSnr;
      delete ch.signalSpectrum;
      delete ch.signalSpectrumNote;
      delete ch.staLta.main;
      for (const t of ch.staLta.triggers) {
        delete t.onset;
        delete t.peak;
      }
    }
    expect(storedAnalysisSchema.safeParse(older).success).toBe(true);
    // A field the engine always wrote is still required.
    const broken = { ...older, leadChannel: undefined };
    expect(storedAnalysisSchema.safeParse(broken).success).toBe(false);
  });
});
