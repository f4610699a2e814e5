// Loads frames for the map one at a time; while one loads, only the newest request waits. Layers
// and footpoints of recent frames are kept (a few), so stepping back and forth does not refetch.

import { getJson } from './api.js';
import { decodeFloat32Base64 } from './float32Base64.js';
import type { MapLayer } from './mapView.js';
import { routes } from './routes.js';
import type { FootpointsAnswer, MapAnswer } from './wire.js';

export interface LoadedFrame {
  frameId: string | number;
  bn: MapLayer;
  gtheta?: MapLayer;
  footpoints: FootpointsAnswer;
}

export class MapLoader {
  private busy = false;
  private pending: { frameId: string | number; withGtheta: boolean } | undefined;
  private cache = new Map<string, MapLayer | FootpointsAnswer>();
  private generation = 0;

  constructor(
    private readonly region: () => string | undefined,
    private readonly onLoaded: (frame: LoadedFrame) => void,
    private readonly onError: (frameId: string | number, message: string) => void,
  ) {}

  /** Drops what was pending and cached (a region switch). */
  reset(): void {
    this.generation++;
    this.pending = undefined;
    this.cache.clear();
  }

  request(frameId: string | number, withGtheta: boolean): void {
    if (this.busy) {
      this.pending = { frameId, withGtheta };
      return;
    }
    void this.load(frameId, withGtheta);
  }

  /** The G_theta layer of a frame (for the hover readout), from the cache or the monitor. */
  async gtheta(frameId: string | number): Promise<MapLayer | undefined> {
    const region = this.region();
    if (!region) return undefined;
    return this.layer(region, frameId, 'gtheta').catch(() => undefined);
  }

  private remember<T extends MapLayer | FootpointsAnswer>(key: string, value: T): T {
    this.cache.set(key, value);
    while (this.cache.size > 12) this.cache.delete(this.cache.keys().next().value as string);
    return value;
  }

  private async layer(region: string, frameId: string | number, layer: 'bn' | 'gtheta'): Promise<MapLayer> {
    const key = `${frameId}|${layer}`;
    const hit = this.cache.get(key) as MapLayer | undefined;
    if (hit) return hit;
    const a = await getJson<MapAnswer>(routes.map(region, frameId, layer));
    const data = decodeFloat32Base64(a.data, a.nx * a.ny, `map ${layer} of frame ${frameId}`);
    return this.remember(key, { data, nx: a.nx, ny: a.ny, dx: a.dx, dy: a.dy, unit: a.unit, ...(a.wcs && { wcs: a.wcs }) });
  }

  private async footpoints(region: string, frameId: string | number): Promise<FootpointsAnswer> {
    const key = `${frameId}|footpoints`;
    const hit = this.cache.get(key) as FootpointsAnswer | undefined;
    if (hit) return hit;
    return this.remember(key, await getJson<FootpointsAnswer>(routes.footpoints(region, frameId)));
  }

  private async load(frameId: string | number, withGtheta: boolean): Promise<void> {
    const region = this.region();
    if (!region) return;
    const generation = this.generation;
    this.busy = true;
    try {
      const [bn, footpoints, gtheta] = await Promise.all([
        this.layer(region, frameId, 'bn'),
        this.footpoints(region, frameId).catch(() => ({ frame_id: frameId, time: '', footpoints: [], tracks: {} }) as FootpointsAnswer),
        withGtheta || this.cache.has(`${frameId}|gtheta`) ? this.layer(region, frameId, 'gtheta').catch(() => undefined) : Promise.resolve(undefined),
      ]);
      if (generation === this.generation) this.onLoaded({ frameId, bn, gtheta, footpoints });
    } catch (err) {
      if (generation === this.generation) this.onError(frameId, (err as Error).message);
    } finally {
      this.busy = false;
      const next = this.pending;
      this.pending = undefined;
      // reset() drops what was pending at a region switch, so anything pending now is current.
      if (next !== undefined) this.request(next.frameId, next.withGtheta);
    }
  }
}
