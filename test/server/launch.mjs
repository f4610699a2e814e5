// A small launcher for the durability test: runs the compiled monitor (dist/) in its own process
// so that the test can kill it with SIGKILL. Usage: node launch.mjs DATA_DIR [PORT]
import { serve } from '../../dist/server/serve.js';

const [dataDir, port = '0'] = process.argv.slice(2);
const m = await serve({ dataDir, port: Number(port), workers: 1, log: (l) => process.stderr.write(l + '\n') });
process.stdout.write(`LISTENING ${m.url}\n`);
process.on('SIGTERM', () => { void m.close().then(() => process.exit(0)); });
