/**
 * A schema built the first time it is used. Building a zod schema is not free (every node binds its
 * methods), and a module of schemas builds all of them when it loads: over 1,400 nodes when the
 * browser opens the queue, most for screens and requests it never touches. Wrapped in `lazySchema`,
 * a schema costs nothing until something parses with it, reads it or builds on it; from then on it
 * is the schema `build` returned (every operation passes through to it).
 * @param build returns the schema (called once)
 * @returns a stand-in of the same type
 */
export function lazySchema<T extends object>(build: () => T): T {
  let built: T | undefined;
  const real = (): T => (built ??= build());
  return new Proxy(Object.create(null) as T, {
    get: (_t, key) => Reflect.get(real(), key) as unknown,
    set: (_t, key, value) => Reflect.set(real(), key, value),
    has: (_t, key) => Reflect.has(real(), key),
    ownKeys: () => Reflect.ownKeys(real()),
    // The stand-in has no own properties: what it reports must be configurable (a Proxy invariant).
    getOwnPropertyDescriptor: (_t, key) => {
      const d = Reflect.getOwnPropertyDescriptor(real(), key);
      return d ? { ...d, configurable: true } : undefined;
    },
    defineProperty: (_t, key, desc) => Reflect.defineProperty(real(), key, desc),
    deleteProperty: (_t, key) => Reflect.deleteProperty(real(), key),
    getPrototypeOf: () => Reflect.getPrototypeOf(real()),
  });
}
