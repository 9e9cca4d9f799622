/*
 * zod 4 compiles object parsers with `new Function` after probing whether eval is allowed, and it
 * decides when each object schema is CREATED, not when it parses. Under our Content-Security-Policy
 * (no 'unsafe-eval', server/middleware/security-headers.ts) the probe is blocked and reported as a
 * violation. Its interpreted parser gives the same results, so the app runs zod `jitless`.
 *
 * zod keeps its settings in `globalThis.__zod_globalConfig` and adopts an object already there when
 * its core module loads. This classic script, served as it is (not bundled) and loaded by
 * index.html before the app's module script, sets it first whatever order the bundler gives the
 * app's chunks (a `z.config()` in the app's entry ran after the chunks it imports, where schemas
 * are created).
 */
globalThis.__zod_globalConfig = Object.assign({}, globalThis.__zod_globalConfig, { jitless: true });
