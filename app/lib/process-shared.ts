/**
 * State shared by the whole server process. Next bundles each route and page with its own copy of the modules it
 * imports, so a module-level `new Map()` is one map per bundle: a comparison the runs' code computed ahead (in the
 * runs' bundle) was never seen by the compare page (its own bundle), whose first visit computed it again, and each
 * route kept its own copy of a run's series. A value made here lives on globalThis under a registered symbol: one
 * per process (in a worker thread, one per thread).
 */
export function processShared<T>(name: string, make: () => T): T {
  const g = globalThis as unknown as Record<symbol, T | undefined>;
  const key = Symbol.for(`runnel.shared.${name}`);
  return (g[key] ??= make());
}
