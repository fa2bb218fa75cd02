// Garbage collections counted while a loop runs (node --expose-gc): `work(count, extra)` runs the loop `count`
// times, and when `extra` is true makes one small array per pass as well. After a warm-up of two runs and a full
// collection (one warm-up run once left 1 collection in a CI run on Node 24 on a busy machine, which six runs of the
// probe alone did not; the second run gives the optimising compiler time to finish first, a guess at the cause),
// the loop is counted alone, then with the extra array: the control, which shows the count sees an allocation of
// that size. Used by the allocation probes (own-cell-probe.mjs, decoding-probe.mjs).
import { PerformanceObserver } from 'node:perf_hooks';

export async function collectionsDuring(work, count) {
  work(count, false);
  work(count, false);
  globalThis.gc();
  let collections = 0;
  const observer = new PerformanceObserver((list) => (collections += list.getEntries().length));
  observer.observe({ entryTypes: ['gc'] });
  work(count, false);
  await new Promise((resolve) => setTimeout(resolve, 50));
  const counted = collections;
  collections = 0;
  work(count, true);
  await new Promise((resolve) => setTimeout(resolve, 50));
  observer.disconnect();
  return { collections: counted, control: collections };
}
