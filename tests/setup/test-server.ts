import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { clientDistDir } from '@server/app';
import { startServer } from '@server/index';
import { createTestContext, type TestContext } from './test-app';

/** A real Seisift server over a fresh test database, serving the built client. */
export interface TestServer {
  url: string;
  ctx: TestContext;
  close(): Promise<void>;
}

/**
 * Starts the app on 127.0.0.1 with a free port for browser tests. Needs the built client
 * (npm test builds it; otherwise run `node node_modules/.bin/vite build`).
 */
export async function startTestServer(overrides: Record<string, string> = {}): Promise<TestServer> {
  if (!existsSync(join(clientDistDir, 'index.html'))) throw new Error(`no built client in ${clientDistDir}: run "node node_modules/.bin/vite build" (npm test does)`);
  const ctx = await createTestContext(overrides);
  const running = await startServer(ctx, { host: '127.0.0.1', port: 0 });
  return {
    url: running.url,
    ctx,
    async close() {
      await running.close();
      await ctx.close();
    },
  };
}
