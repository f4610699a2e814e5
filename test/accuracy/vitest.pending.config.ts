// Runs only the pending targets of the accuracy suite (not collected by `npm test`):
//   npx vitest run --config test/accuracy/vitest.pending.config.ts
import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vitest/config';

export default defineConfig({
  root: fileURLToPath(new URL('../..', import.meta.url)),
  test: {
    include: ['test/accuracy/targets.pending.ts'],
    testTimeout: 120_000,
  },
});
