import { z } from 'zod';

// zod 4 compiles object parsers with `new Function` after probing whether eval is allowed; under
// our Content-Security-Policy (no 'unsafe-eval', server/middleware/security-headers.ts) the probe
// is blocked and reported as a violation. Its interpreted parser gives the same results: use it.
z.config({ jitless: true });
