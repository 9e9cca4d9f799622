import { ConfigError, envSchema } from '@server/env';

/** What the similarity feature reads from the environment (validated like every setting). */
export interface SimilaritySettings {
  /** Templates kept per station. */
  templatesPerStation: number;
  /** C at or above which a window resembles a template. */
  resemblesAt: number;
  /** C at or above which a match to a labelled blast or noise keeps the window from rising as a new event. */
  nearIdenticalAt: number;
  /** Matches searched per window (the counts in the reasons come from these). */
  topK: number;
  /** Matches stored per window (best first). */
  storedK: number;
  /** Smallest C stored. */
  storeMin: number;
}

/**
 * The settings from `source`: SEISIFT_TEMPLATES_PER_STATION (500), SEISIFT_RESEMBLES_AT (0.7),
 * SEISIFT_NEAR_IDENTICAL_AT (0.9). 0.7 and 0.9 are common choices for "similar" and "repeating"
 * waveforms of local events at one station (common practice; studies of repeating earthquakes use
 * 0.9–0.95 for near-identical). @throws ConfigError naming the setting.
 */
export function similaritySettings(source: NodeJS.ProcessEnv = process.env): SimilaritySettings {
  const pick = <K extends 'SEISIFT_TEMPLATES_PER_STATION' | 'SEISIFT_RESEMBLES_AT' | 'SEISIFT_NEAR_IDENTICAL_AT'>(k: K) => {
    const r = envSchema.shape[k].safeParse(source[k]);
    if (!r.success) throw new ConfigError(`${k}: ${r.error.issues[0]?.message ?? 'invalid'} (got "${source[k] ?? ''}")`);
    return r.data;
  };
  const resemblesAt = pick('SEISIFT_RESEMBLES_AT');
  const nearIdenticalAt = pick('SEISIFT_NEAR_IDENTICAL_AT');
  if (nearIdenticalAt < resemblesAt) throw new ConfigError(`SEISIFT_NEAR_IDENTICAL_AT (${nearIdenticalAt}) must not be below SEISIFT_RESEMBLES_AT (${resemblesAt})`);
  return { templatesPerStation: pick('SEISIFT_TEMPLATES_PER_STATION'), resemblesAt, nearIdenticalAt, topK: 20, storedK: 10, storeMin: Math.min(0.5, resemblesAt) };
}
