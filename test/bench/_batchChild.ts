// One `process` run of the batch benchmark, in a process of its own so that its peak RSS (the
// kernel's high-water mark for this process, workers included: they are its threads) and its
// allocator settings (glibc reads them from the environment at start) are its own:
// `node _batchChild.js FOLDER OUT WORKERS [CONFIG]` prints one JSON line.
import { Writable } from 'node:stream';
import { processFolder } from '../../replay/processCommand.js';

const [folder, out, workers, config] = process.argv.slice(2);
const quiet = new Writable({ write(_c, _e, done) { done(); } });
const t = performance.now();
await processFolder({ folder, out, workers: Number(workers), progress: quiet, ...(config !== undefined && { config }) });
const s = (performance.now() - t) / 1000;
const u = process.resourceUsage();
console.log(JSON.stringify({ s, cpu: (u.userCPUTime + u.systemCPUTime) / 1e6, peak: u.maxRSS / 1024 }));
