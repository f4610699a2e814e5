import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { connectedComponents } from '../../core/footpoints/connectedComponents.js';
import { halfTurnAngle, regionProperties } from '../../core/footpoints/regionProperties.js';
import { pixelFluxMx } from '../../core/units.js';

// Reference: scikit-image 0.19 (Debian's python3-skimage) `measure.label` and `measure.regionprops`,
// run by test/fixtures/footpoints/make_regionprops_fixture.py, output committed beside it.
// Axis conventions: skimage indexes (row, col) = (y, x); helicord uses x = column, y = row. So
// skimage's centroid (r, c) is our (y, x); its moments_central[p][q] = Sum (row - r0)^p (col - c0)^q,
// so our xx = mu[0][2]/mu00, yy = mu[2][0]/mu00, xy = mu[1][1]/mu00; its orientation is the angle
// of the major axis from the row axis, ours from the +x (column) axis: ours = pi/2 - skimage's (mod pi).
interface Fixture {
  nx: number; ny: number; threshold: number; bn: number[];
  labels_connectivity1: number[]; labels_connectivity2: number[];
  regions: {
    label: number; area: number; centroid_rc: number[]; weighted_centroid_rc: number[];
    moments_central_rc: number[][]; weighted_moments_central_rc: number[][];
    orientation: number; major_axis_length: number; minor_axis_length: number;
  }[];
}
const fixture = JSON.parse(readFileSync(new URL('../fixtures/footpoints/regionprops_fixture.json', import.meta.url), 'utf8')) as Fixture;
const { nx, ny, threshold } = fixture;
const bn = Float64Array.from(fixture.bn);
const classes = Int8Array.from(bn, (b) => (b > threshold ? 1 : b < -threshold ? -1 : 0));

describe('connected components against skimage.measure.label', () => {
  it('4-connected labels equal skimage connectivity=1, pixel for pixel and in numbering', () => {
    const c = connectedComponents(classes, nx, ny, 4);
    expect(c.count).toBe(Math.max(...fixture.labels_connectivity1));
    expect(Array.from(c.labels)).toEqual(fixture.labels_connectivity1);
  });
  it('8-connected labels equal skimage connectivity=2 (the diagonal bridge joins)', () => {
    const c = connectedComponents(classes, nx, ny, 8);
    expect(c.count).toBe(Math.max(...fixture.labels_connectivity2));
    expect(c.count).toBeLessThan(Math.max(...fixture.labels_connectivity1));
    expect(Array.from(c.labels)).toEqual(fixture.labels_connectivity2);
  });
});

describe('region properties against skimage.measure.regionprops (intensity |bn|)', () => {
  const labels = Int32Array.from(fixture.labels_connectivity2);
  const rel = (a: number, b: number, tol: number) => expect(Math.abs(a - b)).toBeLessThanOrEqual(tol * Math.max(1, Math.abs(b)));

  it('unit pixels: area, centroids, second moments, orientation and axis lengths agree', () => {
    const props = regionProperties(labels, bn, { nx, ny, dx: 1, dy: 1 });
    expect(props.map((p) => p.label)).toEqual(fixture.regions.map((r) => r.label));
    for (const [k, ref] of fixture.regions.entries()) {
      const p = props[k];
      expect(p.pixels).toBe(ref.area);
      rel(p.geometric.x, ref.centroid_rc[1], 1e-12);
      rel(p.geometric.y, ref.centroid_rc[0], 1e-12);
      rel(p.fluxWeighted.x, ref.weighted_centroid_rc[1], 1e-10);
      rel(p.fluxWeighted.y, ref.weighted_centroid_rc[0], 1e-10);
      const mu = ref.moments_central_rc, wm = ref.weighted_moments_central_rc;
      rel(p.geometric.xx, mu[0][2] / mu[0][0], 1e-9);
      rel(p.geometric.yy, mu[2][0] / mu[0][0], 1e-9);
      rel(p.geometric.xy, mu[1][1] / mu[0][0], 1e-9);
      rel(p.fluxWeighted.xx, wm[0][2] / wm[0][0], 1e-9);
      rel(p.fluxWeighted.yy, wm[2][0] / wm[0][0], 1e-9);
      rel(p.fluxWeighted.xy, wm[1][1] / wm[0][0], 1e-9);
      if (ref.minor_axis_length > 0 && ref.major_axis_length / ref.minor_axis_length > 1.05) {
        const d = halfTurnAngle(p.geometric.orientation - (Math.PI / 2 - ref.orientation));
        expect(Math.abs(d)).toBeLessThan(1e-9);
      }
      rel(p.geometric.major, ref.major_axis_length, 1e-9);
      rel(p.geometric.minor, ref.minor_axis_length, 1e-9);
    }
  });

  it('anisotropic pixels scale centroids by dx, dy and moments by dx^2, dx dy, dy^2; flux is Sum bn dS', () => {
    const dx = 0.72, dy = 0.36;
    const props = regionProperties(labels, bn, { nx, ny, dx, dy });
    for (const [k, ref] of fixture.regions.entries()) {
      const p = props[k];
      const wm = ref.weighted_moments_central_rc;
      rel(p.fluxWeighted.x, ref.weighted_centroid_rc[1] * dx, 1e-10);
      rel(p.fluxWeighted.y, ref.weighted_centroid_rc[0] * dy, 1e-10);
      rel(p.fluxWeighted.xx, (wm[0][2] / wm[0][0]) * dx * dx, 1e-9);
      rel(p.fluxWeighted.xy, (wm[1][1] / wm[0][0]) * dx * dy, 1e-9);
      rel(p.fluxWeighted.yy, (wm[2][0] / wm[0][0]) * dy * dy, 1e-9);
      // skimage's weighted m00 is Sum |bn| over the region; every region here has one polarity.
      rel(Math.abs(p.flux), pixelFluxMx(wm[0][0], dx, dy), 1e-12);
      expect(p.area).toBeCloseTo(ref.area * dx * dy, 12);
    }
  });
});
