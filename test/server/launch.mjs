// A small launcher for the durability test: runs the compiled monitor (dist/) in its own process
// so that the test can kill it with SIGKILL. Usage: node launch.mjs DATA_DIR [PORT]
// HELICORD_TEST_OPTIONS (JSON) adds serve options (e.g. {"queueLimit": 4}).
import { serve } from '../../dist/server/serve.js';

const [dataDir, port = '0'] = process.argv.slice(2);
const extra = process.env.HELICORD_TEST_OPTIONS ? JSON.parse(process.env.HELICORD_TEST_OPTIONS) : {};
const m = await serve({ dataDir, port: Number(port), workers: 1, log: (l) => process.stderr.write(l + '\n'), ...extra });
process.stdout.write(`LISTENING ${m.url}\n`);
process.on('SIGTERM', () => { void m.close().then(() => process.exit(0)); });
