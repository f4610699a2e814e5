// The command line refuses what it does not understand, naming it: unknown options (with the
// nearest known one), values of the wrong type, options given twice, switches given values,
// misspelled or misplaced config keys; `helicord CMD --help` prints that command's options with
// their defaults; a missing file is a sentence that names it. None of these starts anything.
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Writable } from 'node:stream';
import { describe, expect, it } from 'vitest';
import { frameToJson } from '../../core/frameJson.js';
import { checkBatchConfig } from '../../replay/batchConfig.js';
import { main } from '../../server/cli.js';
import { spotFrame } from '../support/scenes.js';

function capture(): { stream: Writable; text: () => string } {
  let s = '';
  return { stream: new Writable({ write(c, _e, cb) { s += c.toString(); cb(); } }), text: () => s };
}

async function run(argv: string[]): Promise<{ code: number; out: string; err: string }> {
  const out = capture(), err = capture();
  const code = await main(argv, out.stream, err.stream);
  return { code, out: out.text(), err: err.text() };
}

const dir = mkdtempSync(join(tmpdir(), 'helicord-args-'));
const t0 = Date.parse('2026-05-02T10:00:00Z');
const frameAt = (k: number) => {
  const f = spotFrame(48, 48, 0.5, [{ x: 18 + 0.3 * k, y: 24, peak: 1200, sigma: 1.5 }, { x: 30, y: 24, peak: -1000, sigma: 1.5 }], t0 + k * 720_000);
  return { time: f.time, nx: f.nx, ny: f.ny, dx: f.dx, dy: f.dy, bn: f.bn };
};
const a = join(dir, 'a.json'), b = join(dir, 'b.json');
writeFileSync(a, JSON.stringify(frameToJson(frameAt(0))));
writeFileSync(b, JSON.stringify(frameToJson(frameAt(1))));
const config = (name: string, content: unknown) => { const p = join(dir, name); writeFileSync(p, JSON.stringify(content)); return p; };

describe('unknown and malformed options are refused, naming them (exit 2)', () => {
  it('serve --prot 18751: unknown, did you mean --port; nothing is started', async () => {
    const r = await run(['serve', '--prot', '18751', '--data', join(dir, 'never')]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/helicord serve: unknown option --prot \(did you mean --port\?\); `helicord serve --help` lists its options/);
    expect(r.out).toBe('');
  });

  it('synth --frame 3: unknown, did you mean --frames', async () => {
    const r = await run(['synth', '--out', join(dir, 'never'), '--frame', '3']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/unknown option --frame \(did you mean --frames\?\)/);
  });

  it('values of the wrong type, out of range, or outside the choices', async () => {
    expect((await run(['serve', '--port', 'eighty'])).err).toMatch(/option --port needs a number, got "eighty"/);
    expect((await run(['serve', '--port', '70000'])).err).toMatch(/option --port must be 65535 or less, got 70000/);
    expect((await run(['serve', '--workers', '1.5'])).err).toMatch(/option --workers needs a whole number, got 1\.5/);
    expect((await run(['replay', 'x', '--region', 'r', '--speed=-1'])).err).toMatch(/option --speed must be 0 or more, got -1/);
    expect((await run(['rate', a, '--noise', '0'])).err).toMatch(/option --noise must be more than 0, got 0/);
    expect((await run(['synth', '--out', 'x', '--format', 'fit'])).err).toMatch(/option --format takes fits, json; got "fit" \(did you mean fits\?\)/);
    expect((await run(['process', 'x', '--out', 'y', '--negate', 'bz'])).err).toMatch(/option --negate takes bn, bx, by, vx, vy, vz; got "bz"/);
    expect((await run(['process', 'x', '--out', 'y', '--layout', 'cea'])).err).toMatch(/option --layout takes frame, cea-components; got "cea"/);
  });

  it('a switch given a value, a value missing, an option given twice, names where none are taken', async () => {
    expect((await run(['serve', '--demo=yes'])).err).toMatch(/option --demo is a switch and takes no value/);
    expect((await run(['process', 'x', '--out'])).err).toMatch(/option --out needs a value/);
    expect((await run(['serve', '--port', '1', '--port', '2'])).err).toMatch(/option --port is given twice/);
    const r = await run(['serve', 'data']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/takes no file or folder names, got "data"/);
    expect((await run(['process', 'x', 'y', '--out', 'z'])).err).toMatch(/takes at most 1 name/);
    expect((await run(['rate'])).err).toMatch(/needs a frame file, or a sequence of frames/);
  });

  it('an unknown command suggests the nearest', async () => {
    const r = await run(['proces']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/unknown command "proces" \(did you mean process\?\)/);
  });
});

describe('helicord CMD --help', () => {
  it('prints that command\'s options with their defaults, and only that command', async () => {
    const r = await run(['rate', '--help']);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/^Usage: helicord rate FRAME/);
    expect(r.out).toMatch(/--max-interval S\n\s+frames further apart .*default 1800/);
    expect(r.out).toMatch(/--method NAME\n\s+[^-]*one of auto, dave, dave4vm, lct; default\s+auto/);
    expect(r.out).toMatch(/--layout NAME/);
    expect(r.out).not.toMatch(/--queue-limit/);
    const s = await run(['serve', '-h']);
    expect(s.out).toMatch(/--port N\n\s+.*default 8750/);
    expect(s.out).toMatch(/--data DIR\n\s+.*default \.\/data/);
    expect((await run(['help', 'synth'])).out).toMatch(/^Usage: helicord synth/);
    const all = await run(['--help']);
    expect(all.out).toMatch(/helicord <command> --help/);
    for (const c of ['serve', 'rate', 'replay', 'process', 'synth']) expect(all.out).toMatch(new RegExp(`\\n  ${c} `));
  });
});

describe('config files are checked (exit 1, naming the file and the key)', () => {
  it('{"method": "lct"} is refused and told where the method goes', async () => {
    const r = await run(['rate', a, b, '--config', config('lct.json', { method: 'lct' })]);
    expect(r.code).toBe(1);
    expect(r.err).toMatch(/lct\.json: method: is not a setting; it belongs at analysis\.velocity\.method/);
  });

  it('a misspelled key gets the nearest; a wrong type and a wrong word are named with their path', async () => {
    expect((await run(['rate', a, b, '--config', config('c1.json', { analysis: { velocty: { method: 'lct' } } })])).err)
      .toMatch(/c1\.json: analysis\.velocty: is not a setting; did you mean analysis\.velocity\?/);
    expect((await run(['rate', a, b, '--config', config('c2.json', { analysis: { noiseG: '8' } })])).err)
      .toMatch(/c2\.json: analysis\.noiseG: must be a number, got "8"/);
    expect((await run(['rate', a, b, '--config', config('c3.json', { analysis: { velocity: { method: 'LCT' } } })])).err)
      .toMatch(/c3\.json: analysis\.velocity\.method: must be one of auto, lct, dave, dave4vm, got "LCT" \(did you mean lct\?\)/);
    expect((await run(['process', dir, '--out', join(dir, 'x.csv'), '--config', config('c4.json', { budget: { bridgeGaps: 'yes' } })])).err)
      .toMatch(/c4\.json: budget\.bridgeGaps: must be true or false, got "yes"/);
    expect((await run(['process', dir, '--out', join(dir, 'x.csv'), '--config', config('c5.json', { rules: { 'peak-rate': { treshold: 1 } } })])).err)
      .toMatch(/c5\.json: rules\.peak-rate\.treshold: is not a setting; did you mean rules\.peak-rate\.threshold\?/);
    expect((await run(['process', dir, '--out', join(dir, 'x.csv'), '--config', config('c6.json', { components: { files: { bn: { pattern: '(' } } } })])).err)
      .toMatch(/c6\.json: components\.files\.bn\.pattern: is not a valid regular expression/);
  });

  it('the README\'s complete config file passes the check', () => {
    const readme = readFileSync(join(import.meta.dirname, '../../README.md'), 'utf8');
    const block = /### A complete config file[\s\S]*?```json\n([\s\S]*?)```/.exec(readme)?.[1];
    expect(block).toBeDefined();
    const c = checkBatchConfig(JSON.parse(block!), 'README.md');
    expect(c.analysis.velocity?.method).toBe('auto');
    expect(c.components.layout).toBe('cea-components');
  });

  it('a config that is right is used: --config with the velocity method', async () => {
    const r = await run(['rate', a, b, '--config', config('good.json', { analysis: { velocity: { method: 'lct' } } })]);
    expect(r.code, r.err).toBe(0);
    expect(JSON.parse(r.out).velocity_method).toBe('lct');
  });
});

describe('missing files are a sentence that names them (exit 1)', () => {
  it('a frame, a config file, a folder', async () => {
    const r = await run(['rate', join(dir, 'FRAME.json')]);
    expect(r.code).toBe(1);
    expect(r.err).toBe(`helicord rate: the file ${join(dir, 'FRAME.json')} does not exist.\n`);
    expect((await run(['rate', a, '--config', join(dir, 'lct.json.missing')])).err).toBe(`helicord rate: the config file ${join(dir, 'lct.json.missing')} does not exist.\n`);
    expect((await run(['process', join(dir, 'frames'), '--out', join(dir, 'x.csv')])).err).toBe(`helicord process: the folder ${join(dir, 'frames')} does not exist.\n`);
  });
});

describe('rate --max-interval', () => {
  it('frames 720 s apart are not paired under --max-interval 600 and are with 900', async () => {
    const refused = await run(['rate', a, b, '--max-interval', '600']);
    expect(refused.code).toBe(1);
    expect(refused.err).toMatch(/b\.json: vx\/vy: .*(720|600)/);
    const ok = await run(['rate', a, b, '--max-interval', '900']);
    expect(ok.code, ok.err).toBe(0);
    expect(JSON.parse(ok.out).dt_s).toBe(720);
  });
});
