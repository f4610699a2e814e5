import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/**/*.test.ts'],
    exclude: ['dist/**', 'node_modules/**'],
    testTimeout: 60_000,
    hookTimeout: 60_000,
    poolOptions: {
      forks: {
        // Node 20 can abort a process with "Assertion failed: (data.first) != nullptr" in
        // NodePlatform::ForIsolate when a worker thread (or the process) is torn down while V8 is
        // optimising its code on a background thread; the suite starts and stops hundreds of
        // workers, and one CI run died of it. Optimising on the main thread leaves no such job.
        execArgv: ['--no-concurrent-recompilation', '--no-concurrent-osr'],
      },
    },
  },
});
