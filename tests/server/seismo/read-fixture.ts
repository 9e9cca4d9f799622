import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { z } from 'zod';

/** Reads and checks a JSON fixture written by tests/fixtures/seismo/make-seismo-fixtures.py. */
export function readSeismoFixture<T>(name: string, schema: z.ZodType<T>): T {
  const path = join(import.meta.dirname, '..', '..', 'fixtures', 'seismo', name);
  return schema.parse(JSON.parse(readFileSync(path, 'utf8')));
}
