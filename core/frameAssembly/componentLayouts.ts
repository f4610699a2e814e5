// Named layouts: how the files of common archive conventions map to our components, so that a
// user says `--layout cea-components` (or `"layout"` in the `components` settings) instead of
// writing the rules. A layout gives file rules and per-component corrections; the settings' own
// rules and corrections win component by component. Axis conventions: docs/fits.md.

import type { FrameMapName } from '../frame.js';
import { FRAME_MAPS } from '../frame.js';
import { InputError } from '../inputError.js';
import type { ComponentRule, ComponentTransform, FrameAssemblySettings } from './assembleFrame.js';

export interface ComponentLayout {
  /** One sentence for the help and the docs. */
  readonly description: string;
  readonly files?: Partial<Record<FrameMapName, ComponentRule>>;
  readonly transforms?: Partial<Record<FrameMapName, ComponentTransform>>;
}

/** The component suffix before the FITS extension: `.Br.fits`, `_Br.fits.gz`, `-Br.fts` ... */
const suffix = (name: string): ComponentRule => ({ pattern: `[._-]${name}\\.(fits|fts|fit)(\\.gz)?$`, flags: 'i' });

export const COMPONENT_LAYOUTS = {
  frame: {
    description: 'our own frame file: one file per time, image HDUs named by EXTNAME BN (required), BX, BY, VX, VY, VZ',
  },
  'cea-components': {
    description: 'one file per component per time on heliographic cylindrical-equal-area axes (CTYPE CRLN-CEA/CRLT-CEA or HGLN-CEA/HGLT-CEA, degrees), '
      + 'the component named by a suffix before .fits: Br (radial, up) is bn, Bp (longitudinal, westward, along +x) is bx, '
      + 'Bt (latitudinal, southward) is negated to become by (northward, along +y); the field unit from BUNIT',
    files: { bn: suffix('Br'), bx: suffix('Bp'), by: suffix('Bt') },
    transforms: { by: { negate: true } },
  },
} as const satisfies Record<string, ComponentLayout>;

export type LayoutName = keyof typeof COMPONENT_LAYOUTS;
export const LAYOUT_NAMES = Object.keys(COMPONENT_LAYOUTS) as LayoutName[];

/**
 * The settings with their layout spelled out: the layout's file rules and corrections, overlaid
 * per component by the settings' own. Throws InputError naming an unknown layout.
 */
export function resolveLayout(settings: FrameAssemblySettings, source = 'component settings'): FrameAssemblySettings {
  const name = settings.layout;
  if (name === undefined) return settings;
  const layout = (COMPONENT_LAYOUTS as Record<string, ComponentLayout>)[name];
  if (!layout) throw new InputError(source, 'layout', `'${name}' is not a layout (${LAYOUT_NAMES.join(', ')})`);
  const files: Partial<Record<FrameMapName, ComponentRule>> = { ...layout.files, ...settings.files };
  const transforms: Partial<Record<FrameMapName, ComponentTransform>> = {};
  for (const m of FRAME_MAPS) {
    const t = { ...layout.transforms?.[m], ...settings.transforms?.[m] };
    if (Object.keys(t).length > 0) transforms[m] = t;
  }
  const { layout: _name, ...rest } = settings;
  void _name;
  return {
    ...rest,
    ...(Object.keys(files).length > 0 && { files }),
    ...(Object.keys(transforms).length > 0 && { transforms }),
  };
}

/** True when the settings read several files per time (a file rule per component). */
export function readsComponentFiles(settings: FrameAssemblySettings): boolean {
  const s = resolveLayout(settings);
  return s.files !== undefined && Object.keys(s.files).length > 0;
}

/**
 * `over` laid on `base` (a config file's components under the command line's): the layout, time
 * keyword and tolerances of `over` win; file rules and corrections are merged component by
 * component (a correction's fields one by one).
 */
export function mergeAssemblySettings(base: FrameAssemblySettings, over: FrameAssemblySettings): FrameAssemblySettings {
  const files = { ...base.files, ...over.files };
  const transforms: Partial<Record<FrameMapName, ComponentTransform>> = {};
  for (const m of FRAME_MAPS) {
    const t = { ...base.transforms?.[m], ...over.transforms?.[m] };
    if (Object.keys(t).length > 0) transforms[m] = t;
  }
  return {
    ...base, ...over,
    ...(Object.keys(files).length > 0 && { files }),
    ...(Object.keys(transforms).length > 0 && { transforms }),
  };
}
