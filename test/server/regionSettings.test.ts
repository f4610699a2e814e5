// A region's settings are checked with the same schema as a --config file (replay/settingsSchema.ts):
// a misspelled or misplaced key in `analysis` or `components` is refused, naming its path.
import { describe, expect, it } from 'vitest';
import { DEFAULT_SETTINGS, mergeSettings } from '../../server/regionSettings.js';

describe('region settings', () => {
  it('take known analysis and component settings', () => {
    const s = mergeSettings(DEFAULT_SETTINGS, { analysis: { velocity: { method: 'lct', sigma: 5 }, motionBaselineS: 600 }, components: { layout: 'cea-components' } });
    expect(s.analysis).toEqual({ velocity: { method: 'lct', sigma: 5 }, motionBaselineS: 600 });
    expect(s.components).toEqual({ layout: 'cea-components' });
  });

  it('refuse misspelled, misplaced and mistyped keys by their path', () => {
    expect(() => mergeSettings(DEFAULT_SETTINGS, { analysis: { method: 'lct' } })).toThrow(/analysis\.method/);
    expect(() => mergeSettings(DEFAULT_SETTINGS, { analysis: { velocity: { sigmma: 4 } } })).toThrow(/sigmma/);
    expect(() => mergeSettings(DEFAULT_SETTINGS, { analysis: { motionBaselineS: 'long' } })).toThrow(/motionBaselineS/);
    expect(() => mergeSettings(DEFAULT_SETTINGS, { components: { layot: 'frame' } })).toThrow(/layot/);
  });
});
