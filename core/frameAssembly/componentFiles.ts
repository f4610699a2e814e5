// Several files per time, one component each: each file's first image is given the component
// whose rule matches it (a file-name pattern or a header keyword value, from the settings or their
// layout), files are grouped by observation time (within groupToleranceS of a group's first file)
// and each group is one frame. describeComponentFile reads only headers, so that an archive can be
// scanned and put in order before any image is decoded; groupComponentFiles is the grouping, pure.

import type { Frame, FrameMapName } from '../frame.js';
import { FRAME_MAPS } from '../frame.js';
import { InputError } from '../inputError.js';
import { headerInteger, headerValue } from '../fits/header.js';
import { hduLabel, listHdus } from '../fits/hduList.js';
import { isImageHdu } from '../fits/readImage.js';
import type { ComponentRule, ComponentSource, FrameAssemblySettings } from './assembleFrame.js';
import { assembleFrame } from './assembleFrame.js';
import { resolveLayout } from './componentLayouts.js';
import { frameTimeFromHeaders } from './frameTime.js';
import { pixelSizeMm } from './pixelScale.js';

export interface NamedBytes {
  /** File name (matched by pattern rules) and error source. */
  readonly name: string;
  readonly bytes: Uint8Array;
}

/** The first image HDU of a file, with the headers to search. */
function firstImage(f: NamedBytes, settings: FrameAssemblySettings): ComponentSource {
  const hdus = listHdus(f.bytes, f.name, settings.read);
  const hdu = hdus.find(isImageHdu);
  if (!hdu) throw new InputError(f.name, '(file)', 'holds no image HDU');
  return { source: f.name, bytes: f.bytes, hdu, headers: hdu.index === 0 ? [hdu.header] : [hdu.header, hdus[0].header] };
}

function ruleMatches(rule: ComponentRule, c: ComponentSource, fileName: string): boolean {
  if ('pattern' in rule) return new RegExp(rule.pattern, rule.flags).test(fileName);
  for (const h of c.headers) {
    const v = headerValue(h, rule.keyword);
    if (v !== undefined) return String(v).trim().toUpperCase() === rule.value.trim().toUpperCase();
  }
  return false;
}

/** The settings with their layout applied, checked to read several files per time. */
function fileRules(given: FrameAssemblySettings): FrameAssemblySettings & { files: Partial<Record<FrameMapName, ComponentRule>> } {
  const settings = resolveLayout(given);
  const rules = settings.files;
  if (!rules || !rules.bn) throw new InputError('component settings', 'files.bn', 'is missing: several files per time need a rule for the bn files (or a layout such as cea-components)');
  for (const [name, r] of Object.entries(rules)) {
    if (r && 'pattern' in r) {
      try { new RegExp(r.pattern, r.flags); } catch (e) {
        throw new InputError('component settings', `files.${name}.pattern`, `is not a valid regular expression: ${(e as Error).message}`);
      }
    }
  }
  return settings as FrameAssemblySettings & { files: Partial<Record<FrameMapName, ComponentRule>> };
}

/** What the headers of one component file say. */
export interface ComponentFile {
  readonly file: string;
  readonly map: FrameMapName;
  /** UTC ms. */
  readonly time: number;
  readonly nx: number;
  readonly ny: number;
}

function located(f: NamedBytes, settings: FrameAssemblySettings & { files: Partial<Record<FrameMapName, ComponentRule>> }): { c: ComponentSource; entry: ComponentFile } {
  const c = firstImage(f, settings);
  const base = f.name.split(/[\\/]/).pop() ?? f.name;
  const hits = FRAME_MAPS.filter((m) => settings.files[m] !== undefined && ruleMatches(settings.files[m]!, c, base));
  if (hits.length === 0) throw new InputError(f.name, '(file)', `matches no component rule (${describeRules(settings.files)})`);
  if (hits.length > 1) throw new InputError(f.name, '(file)', `matches the rules of several components: ${hits.join(', ')}`);
  const where = hduLabel(c.hdu.index, c.hdu.name);
  const time = frameTimeFromHeaders(c.headers, f.name, where, settings.timeKeyword).utcMs;
  const axis = (n: 1 | 2) => headerInteger(c.hdu.header, `ZNAXIS${n}`, f.name, where) ?? c.hdu.axes[n - 1] ?? 0;
  return { c, entry: { file: f.name, map: hits[0], time, nx: axis(1), ny: axis(2) } };
}

function describeRules(rules: Partial<Record<FrameMapName, ComponentRule>>): string {
  return Object.entries(rules).map(([m, r]) => `${m}: ${'pattern' in r! ? `name matches /${r!.pattern}/` : `${r!.keyword} = '${r!.value}'`}`).join('; ');
}

/**
 * Which component a file holds, its time and size, from its headers only (nothing decoded).
 * Throws InputError naming the file when it matches no rule or several, or has no time.
 */
export function describeComponentFile(f: NamedBytes, settings: FrameAssemblySettings): ComponentFile & { dx: number; dy: number } {
  const s = fileRules(settings);
  const { c, entry } = located(f, s);
  const where = hduLabel(c.hdu.index, c.hdu.name);
  return { ...entry, dx: pixelSizeMm(c.headers, 1, f.name, where), dy: pixelSizeMm(c.headers, 2, f.name, where) };
}

/** One time's files, or why they do not make a frame. */
export type ComponentGroup =
  | { readonly time: number; readonly files: Partial<Record<FrameMapName, string>> }
  | { readonly time: number; readonly file: string; readonly problem: string; readonly members: readonly string[] };

/**
 * Groups component files by time: files within `toleranceS` of a group's first file are one
 * time. The group's time is its bn file's. A time without a bn file, with two files of one
 * component, or with a component of another size than bn, is a problem naming the files.
 */
export function groupComponentFiles(entries: readonly ComponentFile[], toleranceS = 1): ComponentGroup[] {
  const sorted = [...entries].sort((a, b) => a.time - b.time || (a.file < b.file ? -1 : 1));
  const runs: ComponentFile[][] = [];
  for (const e of sorted) {
    const g = runs[runs.length - 1];
    if (g && e.time - g[0].time <= toleranceS * 1000) g.push(e);
    else runs.push([e]);
  }
  return runs.map((g): ComponentGroup => {
    const members = g.map((e) => e.file);
    const files: Partial<Record<FrameMapName, string>> = {};
    for (const e of g) {
      if (files[e.map]) return { time: g[0].time, members, file: e.file, problem: `is a second ${e.map} file for the time of ${files[e.map]}` };
      files[e.map] = e.file;
    }
    const bn = g.find((e) => e.map === 'bn');
    if (!bn) return { time: g[0].time, members, file: members[0], problem: `no bn file for the time of ${members.join(', ')}` };
    const odd = g.find((e) => e.nx !== bn.nx || e.ny !== bn.ny);
    if (odd) return { time: bn.time, members, file: odd.file, problem: `${odd.map} is ${odd.nx} x ${odd.ny} but bn (${bn.file}) is ${bn.nx} x ${bn.ny}` };
    return { time: bn.time, files };
  });
}

/**
 * Several files per time: the frames, in time order. A file matching no rule or several, a
 * second file of one component for one time, or a time without a bn file, is an InputError
 * naming the file.
 */
export function framesFromFileSet(files: readonly NamedBytes[], given: FrameAssemblySettings): Frame[] {
  const settings = fileRules(given);
  const sources = new Map<string, ComponentSource>();
  const entries: ComponentFile[] = [];
  for (const f of files) {
    const { c, entry } = located(f, settings);
    sources.set(f.name, c);
    entries.push(entry);
  }
  return groupComponentFiles(entries, settings.groupToleranceS).map((g) => {
    if ('problem' in g) throw new InputError(g.file, '(file)', g.problem);
    const comps: Partial<Record<FrameMapName, ComponentSource>> = {};
    for (const [m, file] of Object.entries(g.files)) comps[m as FrameMapName] = sources.get(file!)!;
    return assembleFrame(comps, settings);
  });
}
