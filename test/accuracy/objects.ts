// Field objects of the accuracy scenes (our own invention): each one is a magnetic pattern with an
// exact motion, evaluated analytically at any point and any time, together with the flux transport
// F = Bn u of that motion. Because the normal-field evolution dBn/dt + div F = 0 is linear in
// (Bn, F), a scene made of several objects is exact when its field is the sum of the objects'
// fields and its transport the sum of their transports: F = Sum_k B_k u_k (no division by Bn).
//
// Two kinds:
// - `spot`: an elliptical Gaussian (round, elongated, or broad and weak for diffuse flux) carried
//   by a similarity motion: its centre moves (translation, plus circling about a point), its
//   pattern turns about its centre and may expand self-similarly with its flux kept. With
//   x = c(t) + s(t) R(theta(t)) xi and B = B0(xi) / s^2 the field is the push-forward of a fixed
//   shape, so u = c' + theta' z x (x - c) + (s'/s)(x - c) solves dB/dt + div(B u) = 0 exactly.
//   No horizontal field and no normal velocity.
// - `source`: a vector object, the field above z = 0 of a point source buried at depth d,
//   B = q (r - r_k) / |r - r_k|^3, plus a twist B_tw = curl(f z) around its vertical axis
//   (f = tau a exp(-rho^2 / 2a^2) h(z - z_k): horizontal, divergence-free, adds nothing to Bn).
//   The whole 3-D field moves rigidly with a constant velocity V = (V_h, V_z) (rising when
//   V_z > 0). A rigidly translated divergence-free field obeys the ideal induction equation with
//   v = V, so its normal component obeys dBn/dt = -div_h(Bn V_h - V_z B_t): v_t = V_h, v_n = V_z and
//   F = Bn v_t - v_n B_t, all smooth and exact. The twist part has div_h B_tw = 0: it changes F
//   (and the helicity flux) but not Bn, which is why only vector data can see it.
//
// Positions are in pixels (pixel ix, iy sits at x = ix, y = iy), fields in G, velocities in
// km/s, rates in rad/s (counter-clockwise seen from the corona), times in s.

import { KM_PER_MM } from '../../core/units.js';

/** rad/s per degree per hour. */
export const RAD_S_PER_DEG_H = Math.PI / 180 / 3600;

/** One object's contribution at one point. */
export interface ObjectValue {
  /** Field, G. */
  bn: number; bx: number; by: number;
  /** Flux transport of the object's own motion, Bn v_t - v_n B_t, G km/s. */
  fx: number; fy: number;
  /** Plasma velocity of the object, km/s: horizontal v_t and normal v_n (+z into the corona). */
  vtx: number; vty: number; vn: number;
}

export interface Motion {
  /** Centre, px, and its velocity, km/s. */
  readonly x: number; readonly y: number; readonly vx: number; readonly vy: number;
  /** Rotation rate of the pattern about its centre, rad/s. */
  readonly omega: number;
}

export interface FieldObject {
  readonly name: string;
  readonly kind: 'spot' | 'source';
  /** Sign of the object's field. */
  readonly polarity: 1 | -1;
  /** True when it carries a horizontal field or a normal velocity. */
  readonly vector: boolean;
  /** Values at pixel position (x, y) and time t (s); `dx` is the pixel side, Mm. */
  at(x: number, y: number, t: number, dx: number, out: ObjectValue): void;
  /** Centre, its velocity and the pattern's rotation rate at time t. */
  motion(t: number, dx: number): Motion;
  /** Axis ratio of the pattern (1 for round). */
  readonly axisRatio: number;
}

export interface SpotParams {
  readonly name: string;
  /** Centre at t = 0, px. */
  readonly x: number; readonly y: number;
  /** Peak field at t = 0, G (its sign is the polarity). */
  readonly peak: number;
  /** Gaussian sigma along the major axis at t = 0, px. */
  readonly width: number;
  /** Major over minor axis (>= 1; default 1, round). */
  readonly axisRatio?: number;
  /** Major-axis angle at t = 0, rad counter-clockwise from +x. */
  readonly angle?: number;
  /** Translation of the centre, km/s. */
  readonly velocity?: readonly [number, number];
  /** Rotation of the pattern about its own centre, rad/s. */
  readonly spin?: number;
  /** The centre circles (x, y) (px) at `rate` rad/s; the pattern's orientation is not changed by it. */
  readonly orbit?: { readonly x: number; readonly y: number; readonly rate: number };
  /** Self-similar expansion rate s'/s, 1/s (flux kept: the peak falls as 1/s^2). */
  readonly growth?: number;
}

export function spot(p: SpotParams): FieldObject {
  const ratio = p.axisRatio ?? 1;
  if (!(ratio >= 1)) throw new RangeError(`${p.name}: axisRatio must be >= 1`);
  const a0 = p.width, b0 = p.width / ratio;
  const theta0 = p.angle ?? 0, spin = p.spin ?? 0, growth = p.growth ?? 0;
  const [vxK, vyK] = p.velocity ?? [0, 0];
  const orbit = p.orbit;
  /** Centre (px) and its velocity (px/s). */
  const centre = (t: number, dx: number): [number, number, number, number] => {
    const k = 1 / (dx * KM_PER_MM); // km/s -> px/s
    let x = p.x + vxK * k * t, y = p.y + vyK * k * t, ux = vxK * k, uy = vyK * k;
    if (orbit) {
      const c = Math.cos(orbit.rate * t), s = Math.sin(orbit.rate * t);
      const ex = p.x - orbit.x, ey = p.y - orbit.y;
      const rx = c * ex - s * ey, ry = s * ex + c * ey;
      x = orbit.x + rx + vxK * k * t;
      y = orbit.y + ry + vyK * k * t;
      ux += -orbit.rate * ry;
      uy += orbit.rate * rx;
    }
    return [x, y, ux, uy];
  };
  return {
    name: p.name, kind: 'spot', polarity: p.peak >= 0 ? 1 : -1, vector: false, axisRatio: ratio,
    at(x, y, t, dx, out) {
      const [cx, cy, ux, uy] = centre(t, dx);
      const s = Math.exp(growth * t);
      const th = theta0 + spin * t;
      const c = Math.cos(th), sn = Math.sin(th);
      const ex = x - cx, ey = y - cy;
      const xi = (c * ex + sn * ey) / (a0 * s), eta = (-sn * ex + c * ey) / (b0 * s);
      const b = (p.peak / (s * s)) * Math.exp(-0.5 * (xi * xi + eta * eta));
      const k = dx * KM_PER_MM; // px/s -> km/s
      const vx = (ux - spin * ey + growth * ex) * k;
      const vy = (uy + spin * ex + growth * ey) * k;
      out.bn = b; out.bx = 0; out.by = 0;
      out.vtx = vx; out.vty = vy; out.vn = 0;
      out.fx = b * vx; out.fy = b * vy;
    },
    motion(t, dx) {
      const [x, y, ux, uy] = centre(t, dx);
      return { x, y, vx: ux * dx * KM_PER_MM, vy: uy * dx * KM_PER_MM, omega: spin };
    },
  };
}

export interface SourceParams {
  readonly name: string;
  /** Position above the source at t = 0, px. */
  readonly x: number; readonly y: number;
  /** Depth of the source at t = 0, Mm. */
  readonly depth: number;
  /** Bn right above the source at t = 0, G (q / depth^2; its sign is the polarity). */
  readonly peak: number;
  /** Twist: peak azimuthal field at t = 0 (G; positive counter-clockwise seen from the corona), radius a and height scale L (Mm). */
  readonly twist?: { readonly field: number; readonly radius: number; readonly height: number };
  /** Rigid velocity of the whole 3-D field, km/s: (vx, vy, vz), vz > 0 rising. */
  readonly velocity: readonly [number, number, number];
}

export function source(p: SourceParams): FieldObject {
  const q = p.peak * p.depth * p.depth; // G Mm^2
  const [vx, vy, vz] = p.velocity;
  const tw = p.twist;
  const tau = tw ? tw.field * Math.exp(0.5) : 0; // the azimuthal field peaks at rho = a at tau e^(-1/2)
  const where = (t: number, dx: number) => {
    const k = 1 / (dx * KM_PER_MM);
    return { x: p.x + vx * k * t, y: p.y + vy * k * t, d: p.depth - (vz / KM_PER_MM) * t };
  };
  return {
    name: p.name, kind: 'source', polarity: p.peak >= 0 ? 1 : -1, vector: true, axisRatio: 1,
    at(x, y, t, dx, out) {
      const c = where(t, dx);
      if (!(c.d > 0)) throw new RangeError(`${p.name}: the source reached the surface at t = ${t} s`);
      const rx = (x - c.x) * dx, ry = (y - c.y) * dx; // Mm
      const r2 = rx * rx + ry * ry + c.d * c.d;
      const inv3 = q / (r2 * Math.sqrt(r2));
      const bn = inv3 * c.d;
      let bx = inv3 * rx, by = inv3 * ry;
      if (tw) {
        const a = tw.radius, h = Math.exp(-(c.d * c.d - p.depth * p.depth) / (2 * tw.height * tw.height));
        const g = tau * h * Math.exp(-(rx * rx + ry * ry) / (2 * a * a)) / a;
        bx += -g * ry;
        by += g * rx;
      }
      out.bn = bn; out.bx = bx; out.by = by;
      out.vtx = vx; out.vty = vy; out.vn = vz;
      out.fx = bn * vx - vz * bx;
      out.fy = bn * vy - vz * by;
    },
    motion(t, dx) {
      const c = where(t, dx);
      return { x: c.x, y: c.y, vx, vy, omega: 0 };
    },
  };
}
