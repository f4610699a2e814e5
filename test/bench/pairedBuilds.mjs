// Two builds of analyseFrame timed on the same inputs in one process, alternately, as pairs: on a
// machine whose speed drifts from minute to minute (shared cores, steal), the ratio of each pair's
// CPU times holds where separate runs differ by 20-30 %. Not a bench() module (the runner skips it).
//
//   git worktree add /tmp/before <commit> && (cd /tmp/before && npm ci && npm run build)
//   npm run build && node test/bench/pairedBuilds.mjs /tmp/before/dist dist            # the 512^2 demo pair
//   ARCHIVE=/tmp/a600 FROM=300 N=30 node test/bench/pairedBuilds.mjs /tmp/before/dist dist  # archive frames
//
// Prints each build's median CPU per frame and the median of the pairs' ratios B/A, over the calls
// after the first 10 (the JIT's warm-up).
import { resolve } from 'node:path';

const [dirA, dirB] = process.argv.slice(2).map((d) => resolve(d));
if (!dirA || !dirB) throw new Error('usage: node test/bench/pairedBuilds.mjs DIST_A DIST_B');
const load = async (dist) => ({
  analyseFrame: (await import(`${dist}/core/frameAnalysis.js`)).analyseFrame,
  demoRegion: (await import(`${dist}/replay/demo/demoRegion.js`)).demoRegion,
  source: await import(`${dist}/replay/archiveSource.js`),
});
const A = await load(dirA), B = await load(dirB);
const N = Number(process.env.N ?? 30), FROM = Number(process.env.FROM ?? 0), WARM = 10;
const cpu = (f) => { const c = process.cpuUsage(); const r = f(); const d = process.cpuUsage(c); return [(d.user + d.system) / 1000, r]; };

// Each build's frames and its own state and cache.
async function framesOf(build) {
  if (!process.env.ARCHIVE) {
    const region = build.demoRegion({ frames: 2, size: Number(process.env.SIZE ?? 512), withVelocity: false, cadenceS: 720, storyH: 72, storyStartH: 16 });
    const a = region.frameAt(0), b = region.frameAt(1), cache = new Map();
    const first = build.analyseFrame(a, {}, {}, cache).state;
    return { next: async () => cpu(() => build.analyseFrame(b, first, {}, cache)) };
  }
  const files = (await build.source.listFrameFiles(process.env.ARCHIVE)).sort().slice(FROM, FROM + N);
  let k = 0, state = {};
  const cache = new Map();
  return {
    next: async () => {
      const frame = await build.source.loadEntry({ file: files[k++ % files.length] });
      const [t, r] = cpu(() => build.analyseFrame(frame, state, {}, cache));
      state = r.state;
      return [t, r];
    },
  };
}
const fa = await framesOf(A), fb = await framesOf(B);
const ta = [], tb = [];
for (let i = 0; i < N; i++) {
  // Alternate which build goes first.
  const [x, y] = i % 2 ? [await fb.next(), await fa.next()].reverse() : [await fa.next(), await fb.next()];
  const sa = x[1].sample, sb = y[1].sample;
  if (sa && sb && Math.abs(sa.total - sb.total) > 1e-9 * Math.abs(sa.total)) console.log(`call ${i}: totals differ, ${sa.total} against ${sb.total}`);
  if (i >= WARM) { ta.push(x[0]); tb.push(y[0]); }
}
const median = (v) => [...v].sort((p, q) => p - q)[v.length >> 1];
console.log(`A ${dirA}: median ${median(ta).toFixed(0)} ms CPU | B ${dirB}: median ${median(tb).toFixed(0)} ms | B/A paired median ${median(ta.map((a, i) => tb[i] / a)).toFixed(3)} over ${ta.length} pairs`);
