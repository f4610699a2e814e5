// The worker retry as one operator (server/stages/retryOnce.ts): one more try, then the failure as a
// value that names the last error (the copy it replaced named the first error's message).
import { defer, firstValueFrom } from 'rxjs';
import { describe, expect, it } from 'vitest';
import { retryOnce } from '../../../server/stages/retryOnce.js';

describe('retryOnce', () => {
  const flaky = (failures: number) => {
    let calls = 0;
    const source = defer(async () => {
      calls++;
      if (calls <= failures) throw new Error(`attempt ${calls} failed`);
      return `answer on attempt ${calls}`;
    });
    return { source, calls: () => calls };
  };

  it('a source that fails once is tried again and its answer passes', async () => {
    const f = flaky(1);
    expect(await firstValueFrom(f.source.pipe(retryOnce((e) => `failure: ${(e as Error).message}`)))).toBe('answer on attempt 2');
    expect(f.calls()).toBe(2);
  });

  it('a source that fails twice becomes the failure value of the second error, with no third try', async () => {
    const f = flaky(5);
    expect(await firstValueFrom(f.source.pipe(retryOnce((e) => `failure: ${(e as Error).message}`)))).toBe('failure: attempt 2 failed');
    expect(f.calls()).toBe(2);
  });

  it('a source that succeeds is called once', async () => {
    const f = flaky(0);
    expect(await firstValueFrom(f.source.pipe(retryOnce(() => 'never')))).toBe('answer on attempt 1');
    expect(f.calls()).toBe(1);
  });
});
