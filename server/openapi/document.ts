import { OpenAPIRegistry, OpenApiGeneratorV3, type ResponseConfig, type RouteConfig } from '@asteasolutions/zod-to-openapi';
import { z } from 'zod';
import { apiErrorBodySchema } from '@shared/api-error';
import { accountOperations } from '@server/features/accounts/openapi';
import { auditOperations } from '@server/features/audit/openapi';
import { eventOperations } from '@server/features/events/openapi';
import { healthOperations } from '@server/features/health/openapi';
import { ingestOperations } from '@server/features/ingest/openapi';
import { queueOperations } from '@server/features/queue/openapi';
import { stationOperations } from '@server/features/stations/openapi';
import { supervisionOperations } from '@server/features/supervision/openapi';
import { similarityOperations } from '@server/features/similarity/openapi';
import { openApiPath, type ApiOperation, type ApiResponse } from './operation';

/** GET /api/openapi.json itself. */
const documentOperations: ApiOperation[] = [
  { method: 'get', path: '/api/openapi.json', summary: 'This OpenAPI 3.0 document', auth: 'public', responses: { 200: { description: 'The document', schema: z.object({ openapi: z.string() }).passthrough() } } },
];

/**
 * Every API operation the app mounts, feature by feature (each feature's openapi.ts lists its
 * routes with the zod schemas its router validates with). tests/server/openapi/openapi.test.ts
 * checks this list against the routes Express has mounted, both ways.
 */
export const apiOperations: readonly ApiOperation[] = [
  ...healthOperations,
  ...accountOperations,
  ...auditOperations,
  ...queueOperations,
  ...supervisionOperations,
  ...similarityOperations,
  ...eventOperations,
  ...stationOperations,
  ...ingestOperations,
  ...documentOperations,
];

const errorResponse = (description: string): ResponseConfig => ({ description, content: { 'application/json': { schema: apiErrorBodySchema } } });

/** The errors every operation of its kind can answer, in the one error shape. */
function commonErrors(op: ApiOperation): Record<number, string> {
  const out: Record<number, string> = {};
  if (op.params || op.query || op.body) out[400] = 'validation_failed: `error.message` names the first bad field ("field: message"), `error.details.issues` lists all';
  if (op.auth !== 'public') out[401] = op.auth === 'session-or-token' ? 'unauthenticated: no session and no valid ingest token' : 'unauthenticated: sign in first';
  if (op.permission) out[403] = `forbidden: needs ${op.permission} (role, or station scope for operators)`;
  if (op.params) out[404] = 'not_found: no such resource (or not visible to you)';
  if (op.body && op.method !== 'get') out[413] = 'too_large: the body is over its limit';
  // The document itself is built in memory; everything else may need the database.
  if (op.path !== '/api/openapi.json') out[503] = 'unavailable: the database cannot be reached (Retry-After)';
  return out;
}

function response(r: ApiResponse): ResponseConfig {
  if (!r.schema) return { description: r.description };
  return { description: r.description, content: { [r.contentType ?? 'application/json']: { schema: r.schema } } };
}

/**
 * Builds the OpenAPI 3.0 document of the whole API with @asteasolutions/zod-to-openapi from
 * `apiOperations`, i.e. from the very zod schemas the routers validate with, so the description
 * cannot drift from the checks. Cheap; the router caches it.
 */
export function buildOpenApiDocument(version: string): unknown {
  const registry = new OpenAPIRegistry();
  registry.registerComponent('securitySchemes', 'session', { type: 'apiKey', in: 'cookie', name: 'seisift_session' });
  registry.registerComponent('securitySchemes', 'ingestToken', { type: 'http', scheme: 'bearer', description: 'Per-station ingest token (shown once when created)' });

  for (const op of apiOperations) {
    const responses: RouteConfig['responses'] = {};
    for (const [status, words] of Object.entries(commonErrors(op))) responses[status] = errorResponse(words);
    for (const [status, r] of Object.entries(op.responses)) responses[status] = Number(status) >= 400 && !r.schema ? errorResponse(r.description) : response(r);
    const request: RouteConfig['request'] = {
      ...(op.params ? { params: op.params } : {}),
      ...(op.query ? { query: op.query } : {}),
      ...(op.body ? { body: { required: true, content: { [op.body.contentType ?? 'application/json']: { schema: op.body.schema } } } } : {}),
    };
    registry.registerPath({
      method: op.method,
      path: openApiPath(op.path),
      summary: op.summary,
      ...(op.description ? { description: op.description } : {}),
      security: op.auth === 'public' ? [] : op.auth === 'session-or-token' ? [{ session: [] }, { ingestToken: [] }] : [{ session: [] }],
      ...(op.permission ? { 'x-seisift-permission': op.permission } : {}),
      request,
      responses,
    });
  }

  const generator = new OpenApiGeneratorV3(registry.definitions);
  return generator.generateDocument({
    openapi: '3.0.3',
    info: {
      title: 'Seisift API',
      version,
      description:
        'Every route of the Seisift API. Sign in with POST /api/auth/sign-in (session cookie); state-changing requests need an Origin header of this site. ' +
        'Errors share one shape: { error: { code, message, details } }. `x-seisift-permission` names the policy action a route checks.',
    },
    servers: [{ url: '/' }],
  });
}
