// Okabe & Ito (2008) colours, distinguishable with the common colour-vision deficiencies. Lines also
// differ by dash pattern, so no reading depends on colour alone.
export const OKABE_ITO = {
  black: '#000000',
  orange: '#E69F00',
  skyBlue: '#56B4E9',
  bluishGreen: '#009E73',
  yellow: '#F0E442',
  blue: '#0072B2',
  vermillion: '#D55E00',
  reddishPurple: '#CC79A7',
} as const;

/** What each quantity is drawn in. */
export const SERIES_STYLE = {
  total: { color: OKABE_ITO.black, dash: [] as number[], width: 2 },
  spin: { color: OKABE_ITO.vermillion, dash: [7, 3], width: 1.6 },
  orbit: { color: OKABE_ITO.blue, dash: [2, 3], width: 1.8 },
  background: { color: OKABE_ITO.bluishGreen, dash: [8, 3, 2, 3], width: 1.2 },
  band: 'rgba(0, 0, 0, 0.14)',
  threshold: OKABE_ITO.reddishPurple,
  marker: OKABE_ITO.reddishPurple,
  cursor: OKABE_ITO.skyBlue,
  gap: 'rgba(86, 180, 233, 0.13)',
} as const;
