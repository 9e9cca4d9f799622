import type { RouteConfig } from '@asteasolutions/zod-to-openapi';
import { z } from 'zod';
import type { Action } from '@shared/auth/policies';

type Request = NonNullable<RouteConfig['request']>;

/** One response of an operation: words, and the body's zod schema when it has one. */
export type ApiResponse = {
  description: string;
  /** The body's schema (JSON unless `contentType` says otherwise); none for an empty body (204). */
  schema?: z.ZodType;
  contentType?: 'application/json' | 'text/csv' | 'application/xml';
};

/**
 * One API operation as its router serves it: the Express method and path (exactly as mounted, e.g.
 * `/api/queue/items/:id`), who may call it, and the very zod schemas the router validates its
 * params, query and body with (imported from where the router imports them). The OpenAPI document
 * is generated from these, and a test checks that every mounted route has one and no operation
 * names a route that is not mounted (tests/server/openapi/openapi.test.ts).
 */
export type ApiOperation = {
  method: 'get' | 'post' | 'put' | 'patch' | 'delete';
  path: string;
  summary: string;
  description?: string;
  /** `public`: no session needed; `session`: the session cookie; `session-or-token`: or a station's ingest token. */
  auth: 'public' | 'session' | 'session-or-token';
  /** The policy action the route checks (shared/auth/policies.ts), shown as `x-seisift-permission`. */
  permission?: Action;
  params?: Request['params'];
  query?: Request['query'];
  /** The JSON body's schema, or a multipart form's fields. */
  body?: { schema: z.ZodType; contentType?: 'application/json' | 'multipart/form-data' };
  /** Success and operation-specific error responses by status; the common errors are added by the builder. */
  responses: Record<number, ApiResponse>;
};

/** Shorthand for a JSON object response with a schema. */
export const jsonResponse = (description: string, schema: z.ZodType): ApiResponse => ({ description, schema });

/** `{ ok: true }`, the answer of actions that return nothing else. */
export const okSchema = z.object({ ok: z.literal(true) });

/** Express path pattern → OpenAPI path (`/items/:id` → `/items/{id}`). */
export function openApiPath(expressPath: string): string {
  return expressPath.replace(/:([A-Za-z_][A-Za-z0-9_]*)/g, '{$1}');
}
