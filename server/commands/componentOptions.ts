// The command-line options that say how FITS files map to components (rate, process, replay):
// the same settings a region's `components` and a config file's `components` hold
// (core/frameAssembly: a named layout, a file rule per component, sign and mirror per component).
import type { FrameMapName } from '../../core/frame.js';
import { FRAME_MAPS } from '../../core/frame.js';
import type { ComponentRule, ComponentTransform, FrameAssemblySettings } from '../../core/frameAssembly/assembleFrame.js';
import { COMPONENT_LAYOUTS, LAYOUT_NAMES } from '../../core/frameAssembly/componentLayouts.js';
import type { OptionSpec, ParsedArgs } from './args.js';

export const COMPONENT_OPTIONS: Readonly<Record<string, OptionSpec>> = {
  layout: {
    kind: 'string', value: 'NAME', choices: LAYOUT_NAMES, defaultText: 'frame (or the config file\'s components.layout)',
    help: `how an archive stores its maps: ${Object.entries(COMPONENT_LAYOUTS).map(([n, l]) => `${n} = ${l.description}`).join('; ')}`,
  },
  component: {
    kind: 'list', value: 'MAP=RULE',
    help: 'the files that hold a map when each component is a file of its own: bn=pattern:REGEX (the file name matches) or '
      + 'bn=keyword:KEY=VALUE (a header keyword has this value); MAP is bn, bx, by, vx, vy or vz; overrides the layout\'s rule for that map',
  },
  negate: { kind: 'list', value: 'MAPS', choices: FRAME_MAPS, help: 'multiply these maps by -1 (an axis that points the other way, e.g. a latitudinal component that points south)' },
  'mirror-x': { kind: 'list', value: 'MAPS', choices: FRAME_MAPS, help: 'reverse the columns of these maps (give every map, and negate bx and vx with them)' },
  'mirror-y': { kind: 'list', value: 'MAPS', choices: FRAME_MAPS, help: 'reverse the rows of these maps (give every map, and negate by and vy with them)' },
  unit: { kind: 'list', value: 'MAP=UNIT', help: 'the unit of a map whose HDU has no BUNIT (e.g. bn=G, vx=km/s)' },
  'time-keyword': { kind: 'string', value: 'KEY', choices: ['DATE-AVG', 'DATE-OBS'], defaultText: 'DATE-AVG, else DATE-OBS', help: 'the time keyword that wins when a header has both' },
  'group-tolerance': { kind: 'number', value: 'S', min: 0, defaultText: '1', help: 'component files whose times differ by at most S seconds make one frame' },
};

function mapName(option: string, text: string): FrameMapName {
  if (!(FRAME_MAPS as readonly string[]).includes(text)) throw new Error(`option --${option}: "${text}" is not a map (${FRAME_MAPS.join(', ')})`);
  return text as FrameMapName;
}

function splitAt(option: string, text: string, sep: string, shape: string): [string, string] {
  const i = text.indexOf(sep);
  if (i <= 0 || i === text.length - 1) throw new Error(`option --${option} takes ${shape}, got "${text}"`);
  return [text.slice(0, i).trim(), text.slice(i + 1)];
}

/** A component rule from `pattern:REGEX` or `keyword:KEY=VALUE`. */
function ruleOf(text: string): ComponentRule {
  const [kind, rest] = splitAt('component', text, ':', 'MAP=pattern:REGEX or MAP=keyword:KEY=VALUE');
  if (kind === 'pattern') {
    try { new RegExp(rest); } catch (e) { throw new Error(`option --component: /${rest}/ is not a valid regular expression: ${(e as Error).message}`); }
    return { pattern: rest };
  }
  if (kind === 'keyword') {
    const [keyword, value] = splitAt('component', rest, '=', 'MAP=keyword:KEY=VALUE');
    return { keyword: keyword.toUpperCase(), value };
  }
  throw new Error(`option --component: a rule is pattern:REGEX or keyword:KEY=VALUE, got "${text}"`);
}

/** The component settings the options give (only what they say; merged over a config file's). */
export function componentSettingsFrom(args: ParsedArgs): FrameAssemblySettings {
  const files: Partial<Record<FrameMapName, ComponentRule>> = {};
  for (const item of args.list('component')) {
    const [map, rule] = splitAt('component', item, '=', 'MAP=pattern:REGEX or MAP=keyword:KEY=VALUE');
    const m = mapName('component', map);
    if (files[m]) throw new Error(`option --component gives two rules for ${m}`);
    files[m] = ruleOf(rule);
  }
  const transforms: Partial<Record<FrameMapName, ComponentTransform>> = {};
  const set = (m: FrameMapName, t: ComponentTransform) => { transforms[m] = { ...transforms[m], ...t }; };
  for (const m of args.list('negate')) set(m as FrameMapName, { negate: true });
  for (const m of args.list('mirror-x')) set(m as FrameMapName, { mirrorX: true });
  for (const m of args.list('mirror-y')) set(m as FrameMapName, { mirrorY: true });
  for (const item of args.list('unit')) {
    const [map, unit] = splitAt('unit', item, '=', 'MAP=UNIT');
    set(mapName('unit', map), { unit: unit.trim() });
  }
  const layout = args.string('layout');
  const timeKeyword = args.string('time-keyword') as FrameAssemblySettings['timeKeyword'];
  const groupToleranceS = args.number('group-tolerance');
  return {
    ...(layout !== undefined && { layout }),
    ...(Object.keys(files).length > 0 && { files }),
    ...(Object.keys(transforms).length > 0 && { transforms }),
    ...(timeKeyword !== undefined && { timeKeyword }),
    ...(groupToleranceS !== undefined && { groupToleranceS }),
  };
}
