import type { DecodedStream } from '@server/formats/types';
import type { ProcessingProfile } from '@shared/schemas/processing-profile';
import { analyzeWindow, type AnalysisResult, type AnalyzeOptions } from '@server/dsp/pipeline';

/** One task for the analysis worker: the arguments of `analyzeWindow`, sent by the pool. */
export interface AnalysisTask {
  streams: DecodedStream[];
  profile: ProcessingProfile;
  opts: AnalyzeOptions;
}

/**
 * Worker-thread entry point (piscina calls the default export): runs `analyzeWindow` on the task.
 * Errors (BandError, AnalysisError, RangeError) reject the pool's promise with the same message.
 */
export default function runAnalysisTask(task: AnalysisTask): AnalysisResult {
  return analyzeWindow(task.streams, task.profile, task.opts);
}
