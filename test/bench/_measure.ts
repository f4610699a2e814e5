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

/**
 * Median wall and CPU (user + system of this process) time of `runs` runs after `warmup`, ms. On a
 * shared machine the wall time carries the other jobs; the CPU time much less.
 */
export function wallAndCpu(fn: () => unknown, runs: number, warmup = 2): { wall: number; cpu: number } {
  for (let i = 0; i < warmup; i++) fn();
  const times = { wall: [] as number[], cpu: [] as number[] };
  for (let i = 0; i < runs; i++) { const done = timeOne(times); fn(); done(); }
  return medians(times);
}

/** wallAndCpu for an asynchronous call (CPU time is the whole process's: every thread it keeps busy). */
export async function wallAndCpuAsync(fn: () => Promise<unknown>, runs: number, warmup = 2): Promise<{ wall: number; cpu: number }> {
  for (let i = 0; i < warmup; i++) await fn();
  const times = { wall: [] as number[], cpu: [] as number[] };
  for (let i = 0; i < runs; i++) { const done = timeOne(times); await fn(); done(); }
  return medians(times);
}

/** Starts the clocks for one run; the returned function stops them and records the run. */
function timeOne(times: { wall: number[]; cpu: number[] }): () => void {
  const c = process.cpuUsage(), t = performance.now();
  return () => {
    times.wall.push(performance.now() - t);
    const d = process.cpuUsage(c);
    times.cpu.push((d.user + d.system) / 1000);
  };
}

function medians(times: { wall: number[]; cpu: number[] }): { wall: number; cpu: number } {
  const mid = (v: number[]) => v.sort((p, q) => p - q)[Math.floor(v.length / 2)];
  return { wall: mid(times.wall), cpu: mid(times.cpu) };
}
