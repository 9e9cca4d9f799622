import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { z } from 'zod';
import { createApp } from '@server/app';
import { apiOperations } from '@server/openapi/document';
import { openApiPath } from '@server/openapi/operation';
import { createTestContext, type TestContext } from '@tests/setup/test-app';
import { mountedApiRoutes } from '@tests/server/support/mounted-routes';

/**
 * GET /api/openapi.json describes every route the app mounts, and nothing else: the list of
 * operations (each feature's openapi.ts) is compared with the routes Express has mounted, walked
 * from its router stack, both ways; then the served document is checked to hold each of them with
 * the schemas' own constraints (OpenAPI 3.0.3: paths → methods → parameters, requestBody, responses).
 */
describe('OpenAPI document', () => {
  let ctx: TestContext;
  let app: ReturnType<typeof createApp>;
  beforeAll(async () => {
    ctx = await createTestContext();
    app = createApp(ctx, { serveClient: false });
  });
  afterAll(async () => {
    await ctx?.close();
  });

  const key = (r: { method: string; path: string }) => `${r.method.toUpperCase()} ${r.path}`;

  it('has exactly one operation for every mounted API route, and none for a route that is not mounted', () => {
    const mounted = mountedApiRoutes(app).map(key).sort();
    const documented = apiOperations.map(key);
    expect(new Set(documented).size, 'duplicate operations').toBe(documented.length);
    expect(
      mounted.filter((r) => !documented.includes(r)),
      'mounted routes with no operation: add them to the feature’s openapi.ts',
    ).toEqual([]);
    expect(
      documented.filter((r) => !mounted.includes(r)),
      'operations for routes that are not mounted',
    ).toEqual([]);
    expect(mounted.length).toBeGreaterThanOrEqual(60);
  });

  it('serves every mounted route in the document, with its parameters, body and responses', async () => {
    const res = await request(app).get('/api/openapi.json').expect(200);
    expect(res.headers['content-type']).toMatch(/^application\/json/);
    const operationSchema = z.object({
      summary: z.string().min(5),
      parameters: z.array(z.object({ name: z.string(), in: z.enum(['path', 'query']), schema: z.unknown() })).optional(),
      requestBody: z.object({ content: z.record(z.string(), z.object({ schema: z.unknown() })) }).optional(),
      responses: z.record(z.string(), z.object({ description: z.string() })),
    });
    const doc = z.object({ openapi: z.literal('3.0.3'), paths: z.record(z.string(), z.record(z.string(), operationSchema)) }).parse(res.body);
    for (const route of mountedApiRoutes(app)) {
      const op = doc.paths[openApiPath(route.path)]?.[route.method.toLowerCase()];
      expect(op, `${route.method} ${route.path} is not in the document`).toBeDefined();
      if (!op) continue;
      // Each path parameter of the route is described.
      for (const name of [...route.path.matchAll(/:([A-Za-z_]\w*)/g)].map((m) => m[1])) {
        expect(op.parameters?.some((p) => p.in === 'path' && p.name === name), `${route.method} ${route.path}: path parameter ${name}`).toBe(true);
      }
      // At least one success response, and the error shape for refusals.
      expect(Object.keys(op.responses).some((s) => s.startsWith('2')), `${route.method} ${route.path}: no 2xx`).toBe(true);
    }
    const count = Object.values(doc.paths).reduce((n, methods) => n + Object.keys(methods).length, 0);
    expect(count).toBe(mountedApiRoutes(app).length);
  });

  it('carries the routers’ own schemas (their enums, patterns and limits), not copies', async () => {
    const doc = (await request(app).get('/api/openapi.json').expect(200)).body as { paths: Record<string, Record<string, unknown>> };
    const text = (path: string, method: string) => JSON.stringify(doc.paths[path]?.[method]);
    // Group label: the type only (groupLabelBodySchema), every QuakeML 1.2 type allowed.
    const group = text('/api/supervisor/candidate-events/{id}/label', 'post');
    expect(group).toContain('"eventType"');
    expect(group).toContain('"quarry blast"');
    expect(group).toContain('"current"');
    // Inbox confirm: the optional label (inboxConfirmBodySchema), 422 label_required.
    const confirm = text('/api/supervisor/inbox/{id}/confirm', 'post');
    expect(confirm).toContain('"label"');
    expect(confirm).toContain('"422"');
    // Queue list: the sort enum and page limit of queueQuerySchema.
    const queue = text('/api/queue', 'get');
    expect(queue).toContain('"score"');
    expect(queue).toContain('"age"');
    expect(queue).toContain('"maximum":500');
    // Item ids are whole numbers (the queue router's idParams pattern).
    expect(text('/api/queue/items/{id}', 'get')).toContain('^\\\\d{1,15}$');
    // Sign-in is public; admin routes name their policy action.
    expect(JSON.stringify((doc.paths['/api/auth/sign-in'] as Record<string, { security?: unknown[] }>).post?.security)).toBe('[]');
    expect(text('/api/admin/users', 'get')).toContain('"x-seisift-permission":"users.manage"');
    // Uploads accept a session or an ingest token.
    expect(text('/api/uploads', 'post')).toContain('"ingestToken"');
  });
});
