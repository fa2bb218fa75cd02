// Garbage collections counted while a loop runs (node --expose-gc): `work(count, extra)` runs the loop `count`
// times, and when `extra` is true makes one small array per pass as well. After a warm-up of two runs and a full
// collection, the loop is counted alone, then with the extra array: the control, which shows the count sees an
// allocation of that size. Used by every allocation probe (own-cell-probe.mjs and the probes of decoding.test.ts,
// forecaster.test.ts and translate.test.ts; the last two counted every collection in one round until a full local
// suite counted 1 in the forecaster's).
//
// Counted: the young generation's collections (scavenges), where small allocations made per pass show up (the
// probes run with a 1 MB young generation). Full collections are counted apart (`major`) and not judged: the engine
// starts them on its own when a process goes quiet (during the waits below), which is not an allocation of the loop.
// The count is of the steady state: the loop is counted in rounds, up to five, until a round counts none (`rounds`
// says how many it took). Clean CI runs on Node 24, with the whole suite running beside the probe, counted 1
// young-generation collection in the first counted round three times out of five (runs of the probe alone never
// did): on a busy machine the engine can still be running the loop in a tier that allocates, before its optimised
// code takes over (a guess at the cause). A loop that allocates in every pass counts collections in every round.
import { PerformanceObserver, constants } from 'node:perf_hooks';

export async function collectionsDuring(work, count) {
  work(count, false);
  work(count, false);
  globalThis.gc();
  let minor = 0;
  let major = 0;
  const observer = new PerformanceObserver((list) => {
    for (const entry of list.getEntries()) {
      if (entry.detail?.kind === constants.NODE_PERFORMANCE_GC_MINOR) minor++;
      else major++;
    }
  });
  observer.observe({ entryTypes: ['gc'] });
  let rounds = 0;
  let counted = { minor: 0, major: 0 };
  do {
    minor = 0;
    major = 0;
    work(count, false);
    await new Promise((resolve) => setTimeout(resolve, 50));
    counted = { minor, major };
    rounds++;
  } while (counted.minor > 0 && rounds < 5);
  minor = 0;
  major = 0;
  work(count, true);
  await new Promise((resolve) => setTimeout(resolve, 50));
  observer.disconnect();
  return { collections: counted.minor, major: counted.major, rounds, control: minor };
}
