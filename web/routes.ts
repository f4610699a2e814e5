// URLs of the monitor's interface (docs/api.md), relative to the page's own origin.

const enc = encodeURIComponent;

export const routes = {
  health: (): string => '/api/health',
  regions: (): string => '/api/regions',
  series: (region: string, from?: string, to?: string): string =>
    `/api/regions/${enc(region)}/series${query({ from, to })}`,
  frames: (region: string, from?: string, to?: string): string =>
    `/api/regions/${enc(region)}/frames${query({ from, to })}`,
  footpoints: (region: string, frameId: string | number): string =>
    `/api/regions/${enc(region)}/frames/${enc(String(frameId))}/footpoints`,
  map: (region: string, frameId: string | number, layer: 'bn' | 'gtheta' | 'labels'): string =>
    `/api/regions/${enc(region)}/frames/${enc(String(frameId))}/map?layer=${layer}`,
  mapsFits: (region: string, frameId: string | number): string =>
    `/api/regions/${enc(region)}/frames/${enc(String(frameId))}/maps.fits`,
  braid: (region: string): string => `/api/regions/${enc(region)}/braid`,
  alerts: (region: string): string => `/api/regions/${enc(region)}/alerts`,
  ack: (region: string, alertId: string | number): string =>
    `/api/regions/${enc(region)}/alerts/${enc(String(alertId))}/ack`,
  refusals: (region: string): string => `/api/regions/${enc(region)}/refusals`,
  exportCsv: (region: string): string => `/api/regions/${enc(region)}/export.csv`,
  exportJson: (region: string): string => `/api/regions/${enc(region)}/export.json`,
  replay: (region: string): string => `/api/regions/${enc(region)}/replay`,
  /** Path and query of the viewer socket; the caller adds ws(s)://host. */
  viewerSocket: (region: string, token?: string): string =>
    `/ws/view${query({ region, token: token || undefined })}`,
};

function query(params: Record<string, string | undefined>): string {
  const parts: string[] = [];
  for (const [k, v] of Object.entries(params)) if (v !== undefined && v !== '') parts.push(`${k}=${enc(v)}`);
  return parts.length > 0 ? `?${parts.join('&')}` : '';
}

/** Region names the monitor accepts: [A-Za-z0-9_-]{1,64}. */
export function isRegionName(name: string): boolean {
  return /^[A-Za-z0-9_-]{1,64}$/.test(name);
}
