// One size of the engine benchmark's cost-growth table, in a process of its own so that the peak
// RSS it reports is this size's: `node _growthChild.js N` prints one JSON line with the median
// wall and CPU times (ms) of G_theta (map and total) on the synthetic frame and of analyseFrame on
// a demo frame that carries its velocities (segmentation, tracking, split, uncertainties), and the
// process's peak RSS (MiB).
import { analyseFrame } from '../../core/frameAnalysis.js';
import type { FluxKernelCache } from '../../core/fluxKernel.js';
import { createFluxKernel } from '../../core/fluxKernel.js';
import { fluxTransport } from '../../core/fluxTransport.js';
import { helicityFlux } from '../../core/helicityFlux.js';
import { demoRegion } from '../../replay/demo/demoRegion.js';
import { wallAndCpu } from './_measure.js';
import { syntheticFrame } from './_syntheticFrame.js';

const n = Number(process.argv[2]);
const runs = n >= 2048 ? 1 : n >= 1024 ? 3 : 5;
// Calls before timing: the JIT optimises the long functions over the first few (cold calls cost
// two to three times a warm one at 512^2); fewer at the sizes where a call takes seconds.
const warmup = n >= 2048 ? 1 : n >= 1024 ? 2 : 8;
const f = syntheticFrame(n, 50);
const kernel = createFluxKernel(f);
const t = fluxTransport(f);
const g = wallAndCpu(() => helicityFlux(kernel, t), runs, warmup);
const region = demoRegion({ frames: 2, size: n, withVelocity: true, cadenceS: 720, storyH: 72, storyStartH: 16 });
const a = region.frameAt(0), b = region.frameAt(1);
const cache: FluxKernelCache = new Map();
const state = analyseFrame(a, {}, {}, cache).state;
const fr = wallAndCpu(() => analyseFrame(b, state, {}, cache), runs, warmup);
console.log(JSON.stringify({ n, gWall: g.wall, gCpu: g.cpu, fWall: fr.wall, fCpu: fr.cpu, rss: process.resourceUsage().maxRSS / 1024 }));
