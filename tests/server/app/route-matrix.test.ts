/**
 * Role × route matrix over every API route (issue 3): anonymous → 401, a role without the right
 * → 403, the right role → success, and operators → 403/404 on stations not assigned to them.
 * Real MariaDB, the demo scenario (operator@ holds KV01–KV03), the fake SMTP server.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { policyTable } from '@shared/auth/policies';
import { roles } from '@shared/auth/roles';
import { routeMatrix, type MatrixRequest, type MatrixRow } from './route-matrix';
import { mountedApiRoutes } from '@tests/server/support/mounted-routes';
import { call, createWorld, type Principal, type World } from '@tests/server/support/world';

const principals: readonly Principal[] = ['anonymous', ...roles];
const key = (r: { method: string; path: string }) => `${r.method} ${r.path}`;

function send(w: World, row: MatrixRow, req: MatrixRequest, as: Principal) {
  const cookie = req.cookie !== undefined ? req.cookie : as === 'anonymous' ? null : w.cookie[as];
  let t = call(w, row.method, req.path, cookie);
  if (req.files) {
    for (const [k, v] of Object.entries(req.fields ?? {})) t = t.field(k, v);
    for (const f of req.files) t = t.attach(f.field, f.bytes, f.filename);
    return t;
  }
  return req.body === undefined ? t : t.send(req.body);
}

/**
 * What a refusal tells: status, code and message with ids, station codes and file names made
 * alike (an upload's answer is its first file's outcome).
 */
function answer(res: { status: number; body: { error?: { code: string; message: string }; files?: Array<{ httpStatus: number; code?: string; message?: string }> } }) {
  const same = (m: string | undefined) => (m ?? '').replace(/KV\d\d/gi, 'KVnn').replace(/\d+/g, 'N');
  const file = res.body.files?.[0];
  if (file) return { status: res.status, file: { status: file.httpStatus, code: file.code, message: same(file.message) } };
  return { status: res.status, code: res.body.error?.code, message: same(res.body.error?.message) };
}

function expected(row: MatrixRow, as: Principal): 'ok' | 401 | 403 {
  if (row.allow === 'public') return 'ok';
  if (as === 'anonymous') return 401;
  if (row.allow === 'signed-in') return 'ok';
  return row.allow.includes(as) ? 'ok' : 403;
}

describe('route matrix', () => {
  let w: World;
  beforeAll(async () => {
    w = await createWorld({ SEISIFT_SIGNIN_MAX_PER_ADDRESS: '1000' });
  });
  afterAll(async () => {
    await w.close();
  });

  it('has exactly one row for every mounted API route, and no row for a route that does not exist', () => {
    const mounted = mountedApiRoutes(w.app).map(key).sort();
    const rows = routeMatrix.map(key);
    expect(new Set(rows).size, 'duplicate rows').toBe(rows.length);
    const missing = mounted.filter((r) => !rows.includes(r));
    const stale = rows.filter((r) => !mounted.includes(r));
    expect(missing, 'routes without a matrix row: add them to tests/server/app/route-matrix.ts').toEqual([]);
    expect(stale, 'matrix rows for routes that are not mounted').toEqual([]);
    expect(mounted.length).toBeGreaterThan(20);
  });

  it('lists, for each row with a policy action, exactly the roles the policy module grants', () => {
    for (const row of routeMatrix) {
      if (!row.action) continue;
      const granted = roles.filter((r) => policyTable[row.action!][r] !== undefined);
      expect(Array.isArray(row.allow) ? [...row.allow].sort() : row.allow, key(row)).toEqual([...granted].sort());
    }
  });

  for (const row of routeMatrix) {
    describe(key(row), () => {
      for (const as of principals) {
        const want = expected(row, as);
        it(`${as} → ${want === 'ok' ? `success (${(row.ok ?? [200, 201, 202, 204]).join('/')})` : want}`, async () => {
          const req = row.build ? await row.build(w, as) : { path: row.path };
          const res = await send(w, row, req, as);
          if (want === 'ok') {
            expect(row.ok ?? [200, 201, 202, 204], `${key(row)} as ${as}: ${res.status} ${JSON.stringify(res.body).slice(0, 300)}`).toContain(res.status);
          } else {
            expect(res.status, `${key(row)} as ${as}: ${JSON.stringify(res.body).slice(0, 300)}`).toBe(want);
            expect(res.body.error.code).toBe(want === 401 ? 'unauthenticated' : 'forbidden');
          }
        });
      }
      if (row.foreignStation) {
        it('operator on a station not assigned to them → 403 or 404', async () => {
          const req = await row.foreignStation!(w);
          const res = await send(w, row, req, 'operator');
          expect([403, 404], `${key(row)}: ${res.status} ${JSON.stringify(res.body).slice(0, 300)}`).toContain(res.status);
        });
      }
      if (row.foreignStation && row.missing) {
        it('operator: a station not theirs and an object that does not exist get the same answer (no existence oracle)', async () => {
          const foreign = await send(w, row, await row.foreignStation!(w), 'operator');
          const missing = await send(w, row, await row.missing!(w), 'operator');
          expect(answer(missing), key(row)).toEqual(answer(foreign));
        });
      }
    });
  }
});
