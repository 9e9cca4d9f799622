import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { lazySchema } from '@shared/schemas/lazy-schema';
import { queueRowSchema } from '@shared/schemas/queue';

/*
 * A schema built on first use (shared/schemas/lazy-schema.ts) must behave as the schema itself
 * wherever zod or our code uses one: parsing, errors, composition, instanceof.
 */

describe('lazySchema', () => {
  it('builds nothing until used, then once', () => {
    let builds = 0;
    const s = lazySchema(() => {
      builds++;
      return z.object({ a: z.number().int() });
    });
    expect(builds).toBe(0);
    expect(s.parse({ a: 3 })).toEqual({ a: 3 });
    expect(s.safeParse({ a: 1.5 }).success).toBe(false);
    expect(builds).toBe(1);
  });

  it('gives the same answers and errors as the schema built at once', () => {
    const build = () => z.object({ id: z.number().int(), tag: z.enum(['x', 'y']).optional() }).refine((v) => v.id > 0, { message: 'id must be positive', path: ['id'] });
    const eager = build();
    const lazy = lazySchema(build);
    for (const input of [{ id: 1 }, { id: 2, tag: 'y' }, { id: -1 }, { id: 'a' }, { id: 1, tag: 'z' }, null]) {
      const a = eager.safeParse(input);
      const b = lazy.safeParse(input);
      expect(b.success).toBe(a.success);
      expect(b.success ? b.data : b.error.issues).toEqual(a.success ? a.data : a.error.issues);
    }
  });

  it('composes: inside an object, extended, picked, in an array, and instanceof', () => {
    const inner = lazySchema(() => z.object({ n: z.number() }));
    const outer = z.object({ inner, list: z.array(inner) });
    expect(outer.parse({ inner: { n: 1 }, list: [{ n: 2 }] })).toEqual({ inner: { n: 1 }, list: [{ n: 2 }] });
    expect(outer.safeParse({ inner: { n: 'x' }, list: [] }).success).toBe(false);
    expect(inner.extend({ m: z.string() }).parse({ n: 1, m: 'a' })).toEqual({ n: 1, m: 'a' });
    expect(Object.keys(inner.shape)).toEqual(['n']);
    expect(inner instanceof z.ZodObject).toBe(true);
    expect(inner instanceof z.ZodType).toBe(true);
  });

  it('a real wire schema (queue row) rejects a row without its id and keeps its shape', () => {
    expect(Object.keys(queueRowSchema.shape)).toContain('id');
    expect(queueRowSchema.safeParse({}).success).toBe(false);
    expect(queueRowSchema.partial().safeParse({}).success).toBe(true);
  });
});
