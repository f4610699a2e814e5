// Small timing helpers shared by the benchmarks: median of repeated runs and peak memory.
export function medianMs(fn: () => unknown, runs = 7, warmup = 2): number {
  for (let i = 0; i < warmup; i++) fn();
  const times: number[] = [];
  for (let i = 0; i < runs; i++) {
    const t = performance.now();
    fn();
    times.push(performance.now() - t);
  }
  times.sort((a, b) => a - b);
  return times[Math.floor(times.length / 2)];
}

/** Resident set size in MiB now (Node's own peak is not exposed; callers sample it). */
export function rssMiB(): number {
  return process.memoryUsage().rss / 1048576;
}
