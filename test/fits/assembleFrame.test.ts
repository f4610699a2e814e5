// Frames from FITS files: our EXTNAME convention, multi-file times, time scales (leap seconds
// from the IERS table), pixel size and unit conversions, sign and mirror corrections.
import { existsSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import type { FitsKeyword } from '../../core/fits/cards.js';
import type { ImageToWrite } from '../../core/fits/writeImage.js';
import { writeFits } from '../../core/fits/writeImage.js';
import { frameFromFits } from '../../core/frameAssembly/assembleFrame.js';
import { framesFromFileSet } from '../../core/frameAssembly/componentFiles.js';
import { formatUtc } from '../../core/frameAssembly/frameTime.js';
import { frameToFits } from '../../core/frameAssembly/frameToFits.js';
import { LEAP_SECONDS } from '../../core/frameAssembly/leapSeconds.js';
import { InputError } from '../../core/inputError.js';
import { MM_PER_HELIOGRAPHIC_DEG } from '../../core/units.js';
import { loadFrameFile, loadFrameFileSet } from '../../replay/frameFiles.js';

const nx = 4, ny = 3;
const ramp = (k: number) => Float32Array.from({ length: nx * ny }, (_, i) => k * (i + 1));

function file(images: Partial<ImageToWrite>[], primary: FitsKeyword[] = []): Uint8Array {
  return writeFits({
    primary,
    images: images.map((p) => ({ name: 'BN', nx, ny, values: ramp(1), bunit: 'G', wcs: { cdelt: [0.5, 0.25] }, ...p }) as ImageToWrite),
  });
}
const obs = (date: string, timesys?: string): FitsKeyword[] => [{ key: 'DATE-OBS', value: date }, ...(timesys ? [{ key: 'TIMESYS', value: timesys }] : [])];
const utc = (iso: string) => Date.parse(iso);

describe('time from DATE-OBS / DATE-AVG with TIMESYS', () => {
  it('TAI converts with 37 s after 2017-01-01 and 36 s before (IERS leap-second table)', () => {
    expect(frameFromFits(file([{}], obs('2017-06-01T00:00:37.000', 'TAI')), 'a.fits').time).toBe(utc('2017-06-01T00:00:00Z'));
    expect(frameFromFits(file([{}], obs('2016-06-01T00:00:36.000', 'TAI')), 'a.fits').time).toBe(utc('2016-06-01T00:00:00Z'));
    // Across the 2017 leap second: TAI 00:00:37 on 1 Jan 2017 is UTC midnight.
    expect(frameFromFits(file([{}], obs('2017-01-01T00:00:37.000', 'TAI')), 'a.fits').time).toBe(utc('2017-01-01T00:00:00Z'));
    expect(frameFromFits(file([{}], obs('2017-01-01T00:00:35.500', 'TAI')), 'a.fits').time).toBe(utc('2016-12-31T23:59:59.5Z'));
  });

  it('TT = TAI + 32.184 s and GPS = TAI - 19 s (FITS 4.0 s.9.2.1)', () => {
    expect(frameFromFits(file([{}], obs('2020-01-01T00:01:09.184', 'TT')), 'a.fits').time).toBe(utc('2020-01-01T00:00:00Z'));
    expect(frameFromFits(file([{}], obs('2020-01-01T00:00:18.000', 'GPS')), 'a.fits').time).toBe(utc('2020-01-01T00:00:00Z'));
  });

  it('UTC is the default; DATE-AVG wins over DATE-OBS unless told otherwise; TIME-OBS completes a date', () => {
    expect(frameFromFits(file([{}], obs('2011-02-15T01:02:03.5')), 'a.fits').time).toBe(utc('2011-02-15T01:02:03.5Z'));
    const both = file([{ keywords: [{ key: 'DATE-AVG', value: '2011-02-15T00:06:00' }] }], obs('2011-02-15T00:00:00'));
    expect(frameFromFits(both, 'a.fits').time).toBe(utc('2011-02-15T00:06:00Z'));
    expect(frameFromFits(both, 'a.fits', { timeKeyword: 'DATE-OBS' }).time).toBe(utc('2011-02-15T00:00:00Z'));
    const split = file([{}], [{ key: 'DATE-OBS', value: '2011-02-15' }, { key: 'TIME-OBS', value: '12:30:00' }]);
    expect(frameFromFits(split, 'a.fits').time).toBe(utc('2011-02-15T12:30:00Z'));
  });

  it('second 60 is a UTC leap second only at the end of a leap-second day', () => {
    expect(frameFromFits(file([{}], obs('2016-12-31T23:59:60.500')), 'a.fits').time).toBe(utc('2017-01-01T00:00:00.5Z'));
    expect(() => frameFromFits(file([{}], obs('2016-12-30T23:59:60')), 'a.fits')).toThrow(/second 60/);
  });

  it('bad or missing times are InputErrors naming the keyword', () => {
    expect(() => frameFromFits(file([{}], obs('15/02/11')), 'a.fits')).toThrow(/a\.fits: HDU 1 \(BN\) DATE-OBS: '15\/02\/11' is not a FITS date-time/);
    expect(() => frameFromFits(file([{}], obs('2011-02-30T00:00:00')), 'a.fits')).toThrow(/not a valid calendar date/);
    expect(() => frameFromFits(file([{}], obs('2011-02-15T00:00:00', 'TDB')), 'a.fits')).toThrow(/TIMESYS: 'TDB' is not supported/);
    expect(() => frameFromFits(file([{}], obs('1970-01-01T00:00:00', 'TAI')), 'a.fits')).toThrow(/before 1972/);
    expect(() => frameFromFits(file([{}]), 'a.fits')).toThrow(/DATE-OBS: is missing/);
  });

  const leapList = '/usr/share/zoneinfo/leap-seconds.list';
  if (!existsSync(leapList)) console.warn(`SKIPPING leap-second table comparison: ${leapList} not present`);
  it.skipIf(!existsSync(leapList))('the table equals the IERS leap-seconds.list shipped with tzdata', () => {
    const ntpEpochToUnix = 2208988800; // seconds from 1900-01-01 to 1970-01-01
    const rows = readFileSync(leapList, 'utf8').split('\n').filter((l) => /^\d/.test(l)).map((l) => l.split(/\s+/).map(Number));
    expect(LEAP_SECONDS.map((e) => [e.utcMs / 1000 + ntpEpochToUnix, e.taiMinusUtc])).toEqual(rows.map((r) => [r[0], r[1]]));
  });

  it('formatUtc shows the UTC clock whatever the host zone', () => {
    const old = process.env.TZ;
    try {
      for (const tz of ['UTC', 'America/New_York', 'Asia/Kolkata']) {
        process.env.TZ = tz;
        expect(formatUtc(utc('2011-03-13T07:30:00.250Z'))).toBe('2011-03-13T07:30:00.250');
        expect(formatUtc(utc('2026-06-30T23:59:59Z'), 'yyyy-MM-dd HH:mm')).toBe('2026-06-30 23:59');
        // 02:30 does not exist on New York's clock that day (daylight-saving gap): still right.
        expect(formatUtc(utc('2011-03-13T02:30:00Z'))).toBe('2011-03-13T02:30:00.000');
      }
    } finally {
      process.env.TZ = old;
    }
    expect(formatUtc(Date.UTC(999, 0, 2))).toBe('0999-01-02T00:00:00.000');
    expect(() => formatUtc(0, 'yyyy-MM-dd hh:mm')).toThrow(/'h' in 'yyyy-MM-dd hh:mm' is not a field/);
  });
});

describe('pixel size from CDELT/CUNIT', () => {
  const dx = (wcs: ImageToWrite['wcs'], extra: FitsKeyword[] = []) =>
    frameFromFits(file([{ wcs, keywords: extra }], obs('2011-02-15T00:00:00')), 'a.fits');
  it('lengths: Mm, km, m', () => {
    expect(dx({ cdelt: [0.5, 0.25] }).dx).toBe(0.5);
    expect(dx({ cdelt: [0.5, 0.25] }).dy).toBe(0.25);
    expect(dx({ cdelt: [360, 720], cunit: ['km', 'km'] }).dx).toBeCloseTo(0.36, 15);
    expect(dx({ cdelt: [3.6e5, 3.6e5], cunit: ['m', 'm'] }).dy).toBeCloseTo(0.36, 15);
  });
  it('degrees of heliographic arc: 1 deg = 2 pi 696 / 360 Mm', () => {
    const f = dx({ cdelt: [0.03, 0.03], cunit: ['degree', 'degree'], ctype: ['CRLN-CEA', 'CRLT-CEA'] });
    expect(f.dx).toBeCloseTo(0.03 * (2 * Math.PI * 696) / 360, 12);
    expect(f.dx).toBe(0.03 * MM_PER_HELIOGRAPHIC_DEG);
  });
  it('arcsec with DSUN_OBS: (DSUN_OBS - R_sun) * angle, 1 au when absent', () => {
    const arc = Math.PI / 648000;
    const f = dx({ cdelt: [0.5, 0.5], cunit: ['arcsec', 'arcsec'], ctype: ['HPLN-TAN', 'HPLT-TAN'] }, [{ key: 'DSUN_OBS', value: 1.47e11 }]);
    expect(f.dx).toBeCloseTo((147000 - 696) * 0.5 * arc, 12);
    const g = dx({ cdelt: [0.5, 0.5], cunit: ['arcsec', 'arcsec'], ctype: ['HPLN-TAN', 'HPLT-TAN'] });
    expect(g.dx).toBeCloseTo((149597.8707 - 696) * 0.5 * arc, 9);
    // About 0.36 Mm for 0.5 arcsec at 1 au (from memory: 1 arcsec is about 725 km at 1 au).
    expect(g.dx).toBeGreaterThan(0.355);
    expect(g.dx).toBeLessThan(0.365);
  });
  it('unknown or missing units are InputErrors naming CUNITi', () => {
    expect(() => dx({ cdelt: [1, 1], cunit: ['furlong', 'Mm'] })).toThrow(/CUNIT1: 'furlong' is not a pixel unit/);
    expect(() => dx({ cdelt: [1, 1], cunit: ['mm', 'mm'] })).toThrow(/CUNIT1: 'mm'/);
  });
});

describe('units, corrections and the EXTNAME convention', () => {
  const t0 = obs('2011-02-15T00:00:00');
  it('BUNIT G and Mx/cm^2 alike, T to G; velocities m/s to km/s', () => {
    const f = frameFromFits(file([
      { name: 'BN', bunit: 'Mx/cm^2' }, { name: 'BX', bunit: 'T', values: ramp(1e-4) }, { name: 'BY', bunit: 'G', values: ramp(2) },
      { name: 'VX', bunit: 'm/s', values: ramp(100) }, { name: 'VY', bunit: 'km/s', values: ramp(0.5) },
    ], t0), 'a.fits');
    expect(f.bn[3]).toBe(4);
    expect(f.bx![3]).toBeCloseTo(4, 4);
    expect(f.by![3]).toBe(8);
    expect(f.vx![3]).toBeCloseTo(0.4, 12);
    expect(f.vy![3]).toBe(2);
    expect(f.vz).toBeUndefined();
    expect(f.provenance?.keywords?.['DATE-OBS']).toBe('2011-02-15T00:00:00');
  });
  it('a missing BUNIT is refused unless the region sets a unit for that component', () => {
    const b = file([{ bunit: undefined }], t0);
    expect(() => frameFromFits(b, 'a.fits')).toThrow(/a\.fits: HDU 1 \(BN\) BUNIT: is missing/);
    expect(frameFromFits(b, 'a.fits', { transforms: { bn: { unit: 'G' } } }).bn[0]).toBe(1);
    expect(() => frameFromFits(file([{ bunit: 'km/s' }], t0), 'a.fits')).toThrow(/'km\/s' is not a field unit/);
  });
  it('negate and mirror per component', () => {
    const b = file([{ name: 'BN' }, { name: 'VX', bunit: 'km/s' }, { name: 'VY', bunit: 'km/s' }], t0);
    const f = frameFromFits(b, 'a.fits', { transforms: { vy: { negate: true }, vx: { mirrorX: true }, bn: { mirrorY: true } } });
    expect(Array.from(f.vy!)).toEqual(Array.from(ramp(-1)));
    expect(Array.from(f.vx!.subarray(0, 4))).toEqual([4, 3, 2, 1]);
    expect(Array.from(f.bn.subarray(0, 4))).toEqual([9, 10, 11, 12]);
  });
  it('BN is required; a map of another shape, or vx without vy, is refused', () => {
    expect(() => frameFromFits(file([{ name: 'BX' }], t0), 'a.fits')).toThrow(/a\.fits: EXTNAME BN: not found \(the file has HDU 0 \(primary\), HDU 1 \(BX\)\)/);
    expect(() => frameFromFits(file([{}, { name: 'BX', nx: 3, ny: 4 }], t0), 'a.fits')).toThrow(/bx is 3 x 4 but bn is 4 x 3/);
    expect(() => frameFromFits(file([{}, { name: 'VX', bunit: 'km/s' }], t0), 'a.fits')).toThrow(/vx and vy must be given together/);
  });
  it('NaN stays NaN and a map without any valid pixel is refused', () => {
    const v = ramp(1); v[2] = NaN;
    expect(Number.isNaN(frameFromFits(file([{ values: v }], t0), 'a.fits').bn[2])).toBe(true);
    expect(() => frameFromFits(file([{ values: new Float32Array(12).fill(NaN) }], t0), 'a.fits')).toThrow(/holds no valid value/);
  });
});

describe('several files per time', () => {
  const one = (name: string, date: string, value: number, extra: FitsKeyword[] = []) => ({
    name,
    bytes: writeFits({ primary: [], images: [{ name: 'MAP', nx, ny, values: ramp(value), bunit: 'G', wcs: { cdelt: [0.5, 0.5] }, keywords: [...obs(date), ...extra] }] }),
  });
  it('grouped by time, components by file-name pattern', () => {
    const files = [
      one('ar.20110215_001200.Bp.fits', '2011-02-15T00:12:00.3', 2),
      one('ar.20110215_000000.Br.fits', '2011-02-15T00:00:00', 1),
      one('ar.20110215_000000.Bp.fits', '2011-02-15T00:00:00.4', 2),
      one('ar.20110215_000000.Bt.fits', '2011-02-15T00:00:00', 3),
      one('ar.20110215_001200.Br.fits', '2011-02-15T00:12:00', 1),
      one('ar.20110215_001200.Bt.fits', '2011-02-15T00:12:00', 3),
    ];
    const frames = framesFromFileSet(files, { files: { bn: { pattern: '\\.Br\\.fits$' }, bx: { pattern: '\\.Bp\\.fits$' }, by: { pattern: '\\.Bt\\.fits$' } }, transforms: { by: { negate: true } } });
    expect(frames.map((f) => f.time)).toEqual([utc('2011-02-15T00:00:00Z'), utc('2011-02-15T00:12:00Z')]);
    expect(frames[0].bx![0]).toBe(2);
    expect(frames[0].by![0]).toBe(-3);
    expect(frames[1].provenance?.source).toBe('ar.20110215_001200.Br.fits');
    expect(frames[1].provenance?.keywords?.FILE_BX).toBe('ar.20110215_001200.Bp.fits');
  });
  it('components by header keyword', () => {
    const files = [
      one('x1.fits', '2011-02-15T00:00:00', 1, [{ key: 'CONTENT', value: 'radial field' }]),
      one('x2.fits', '2011-02-15T00:00:00', 2, [{ key: 'CONTENT', value: 'west field' }]),
      one('x3.fits', '2011-02-15T00:00:00', 3, [{ key: 'CONTENT', value: 'north field' }]),
    ];
    const [f] = framesFromFileSet(files, { files: { bn: { keyword: 'CONTENT', value: 'RADIAL FIELD' }, bx: { keyword: 'CONTENT', value: 'west field' }, by: { keyword: 'CONTENT', value: 'north field' } } });
    expect([f.bn[0], f.bx![0], f.by![0]]).toEqual([1, 2, 3]);
  });
  it('unmatched files, duplicates and times without bn are InputErrors naming the file', () => {
    const rules = { files: { bn: { pattern: 'Br' }, bx: { pattern: 'Bp' }, by: { pattern: 'Bt' } } };
    expect(() => framesFromFileSet([one('a.Br.fits', '2011-02-15T00:00:00', 1), one('a.Bz.fits', '2011-02-15T00:00:00', 1)], rules)).toThrow(/a\.Bz\.fits: \(file\): matches no component rule/);
    expect(() => framesFromFileSet([one('a.Br.fits', '2011-02-15T00:00:00', 1), one('b.Br.fits', '2011-02-15T00:00:00', 1)], rules)).toThrow(/b\.Br\.fits: \(file\): is a second bn file/);
    expect(() => framesFromFileSet([one('a.Bp.fits', '2011-02-15T00:00:00', 1)], rules)).toThrow(/no bn file for the time of a\.Bp\.fits/);
    expect(() => framesFromFileSet([], { files: { bn: { pattern: '(' } } })).toThrow(InputError);
  });
});

describe('server loadFrameFile / loadFrameFileSet', () => {
  const dir = mkdtempSync(join(tmpdir(), 'helicord-frames-'));
  const bytes = file([{}, { name: 'VX', bunit: 'm/s', values: ramp(1000) }, { name: 'VY', bunit: 'm/s', values: ramp(-1000) }], obs('2017-06-01T00:00:37', 'TAI'));
  it('loads .fits, .fts and .fits.gz frames', async () => {
    for (const [name, data] of [['f.fits', bytes], ['f.fts', bytes], ['f.fits.gz', gzipSync(bytes)]] as const) {
      const p = join(dir, name);
      writeFileSync(p, data);
      const f = await loadFrameFile(p);
      expect(f.time).toBe(utc('2017-06-01T00:00:00Z'));
      expect(f.vx![2]).toBe(3);
      expect(f.provenance?.source).toBe(p);
    }
  });
  it('still loads JSON, and names the file on bad input', async () => {
    const p = join(dir, 'f.json');
    writeFileSync(p, JSON.stringify({ time: '2011-02-15T00:00:00Z', nx: 1, ny: 1, dx: 1, dy: 1, bn: [5] }));
    expect((await loadFrameFile(p)).bn[0]).toBe(5);
    const bad = join(dir, 'bad.fits');
    writeFileSync(bad, bytes.subarray(0, 4000));
    await expect(loadFrameFile(bad)).rejects.toThrow(`${bad}: HDU 1 header: header block at byte 2880 is truncated`);
    await expect(loadFrameFile(join(dir, 'none.fits'))).rejects.toThrow(/none\.fits: \(file\): does not exist/);
    const gz = join(dir, 'bad.fits.gz');
    writeFileSync(gz, Buffer.from('not gzip'));
    await expect(loadFrameFile(gz)).rejects.toThrow(/\(gzip\): cannot be decompressed/);
  });
  it('loadFrameFileSet groups component files by time', async () => {
    const names = ['s.Br.fits', 's.Bp.fits', 's.Bt.fits'];
    names.forEach((n, i) => writeFileSync(join(dir, n), writeFits({ images: [{ name: 'MAP', nx, ny, values: ramp(i + 1), bunit: 'G', wcs: { cdelt: [1, 1] }, keywords: obs('2011-02-15T00:00:00') }] })));
    const frames = await loadFrameFileSet(names.map((n) => join(dir, n)), { files: { bn: { pattern: 'Br' }, bx: { pattern: 'Bp' }, by: { pattern: 'Bt' } } });
    expect(frames).toHaveLength(1);
    expect(frames[0].by![0]).toBe(3);
  });
});

describe('an astropy-written frame file (test/fixtures/fits/checksum_frame.fits)', () => {
  const dir = join(__dirname, '..', 'fixtures', 'fits');
  const expected = JSON.parse(readFileSync(join(dir, 'expected.json'), 'utf8')) as Record<string, { values: (number | null)[] }>;
  it('TAI time, heliographic degrees, Mx/cm^2 and m/s become UTC, Mm, G and km/s', () => {
    const f = frameFromFits(new Uint8Array(readFileSync(join(dir, 'checksum_frame.fits'))), 'checksum_frame.fits');
    expect(f.time).toBe(utc('2017-03-01T12:00:00Z'));
    expect([f.nx, f.ny]).toEqual([16, 12]);
    expect(f.dx).toBe(0.03 * MM_PER_HELIOGRAPHIC_DEG);
    expect(Array.from(f.bn)).toEqual(expected['checksum_frame.fits'].values);
    expect(Array.from(f.vx!)).toEqual(expected['checksum_frame.fits#VX'].values.map((v) => v! / 1e3));
    expect(f.provenance?.keywords?.TELESCOP).toBe('invented-scope');
  });
});

describe('frameToFits', () => {
  it('a frame written by our convention reads back with the same time, grid and float32 maps', () => {
    const f0 = frameFromFits(file([{}, { name: 'VX', bunit: 'km/s', values: ramp(0.1) }, { name: 'VY', bunit: 'km/s', values: ramp(-0.2) }], obs('2017-06-01T00:00:37.250', 'TAI')), 'in.fits');
    const bytes = frameToFits(f0, { creator: 'helicord test', writtenAt: utc('2026-12-01T00:00:00Z') });
    const f1 = frameFromFits(bytes, 'out.fits');
    expect(f1.time).toBe(utc('2017-06-01T00:00:00.25Z'));
    expect([f1.nx, f1.ny, f1.dx, f1.dy]).toEqual([f0.nx, f0.ny, f0.dx, f0.dy]);
    expect(Array.from(f1.vy!)).toEqual(Array.from(f0.vy!, (v) => Math.fround(v)));
    expect(f1.provenance?.keywords).toMatchObject({ CREATOR: 'helicord test', DATE: '2026-12-01T00:00:00.000', SRCFILE: 'in.fits', TIMESYS: 'UTC' });
  });
});
