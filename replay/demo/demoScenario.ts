// The story of the demo region, an invented active region, told on a 72-hour scenario clock:
//
//   0-2 h    a quiet patch with a few small plage footpoints;
//   2-30 h   a bipole emerges at the centre: its flux grows to 3.2e21 Mx a side while the two
//            polarities separate along x (the following side in two pieces);
//   8-44 h   the leading (positive) spot, an elliptical core with two smaller umbral cores on its
//            major axis, turns counter-clockwise by 92 degrees as one body, and the
//            two polarities slide past each other along the polarity line (shear, 8 Mm each way);
//   10-36 h  small footpoints drift away from the leading spot, two small negative ones converge
//            and merge (they carry one label after 34 h);
//   44-72 h  the motions have stopped: the budget stays on a plateau.
//
// Both the spin of the leading spot and the clockwise turn of the bipole axis inject negative
// helicity, so |H| builds up monotonically to about 3e42 Mx^2 and then stays there. Every number
// here is invented for the demo. Each component moves rigidly (translation plus, for the leading
// spot, rotation), so the footpoint velocity it imposes is exactly the motion of its pattern.

/** One flux concentration at one moment. Lengths in Mm, time derivatives per scenario hour. */
export interface DemoComponent {
  /** Label of the footpoint it belongs to (1, 2, ...); merged components share one. */
  readonly label: number;
  /** Signed flux, Mx. */
  readonly flux: number;
  /** Centre, Mm from the patch centre. */
  readonly cx: number;
  readonly cy: number;
  /** Velocity of the centre, Mm per scenario hour. */
  readonly vx: number;
  readonly vy: number;
  /** Gaussian widths along the major and minor axes, Mm. */
  readonly sigmaMajor: number;
  readonly sigmaMinor: number;
  /** Orientation of the major axis, rad counter-clockwise from +x, and its rate, rad per scenario hour. */
  readonly angle: number;
  readonly omega: number;
}

/** Length of the scenario clock, hours. */
export const SCENARIO_HOURS = 72;

/** 3 s^2 - 2 s^3 between t0 and t1 (0 before, 1 after), with its derivative per hour. */
function ramp(t: number, t0: number, t1: number): { value: number; rate: number } {
  if (t <= t0) return { value: 0, rate: 0 };
  if (t >= t1) return { value: 1, rate: 0 };
  const s = (t - t0) / (t1 - t0);
  return { value: s * s * (3 - 2 * s), rate: (6 * s * (1 - s)) / (t1 - t0) };
}

/** Linear motion from a to b between t0 and t1 along the smooth ramp. */
function glide(t: number, t0: number, t1: number, ax: number, ay: number, bx: number, by: number) {
  const r = ramp(t, t0, t1);
  return {
    cx: ax + (bx - ax) * r.value, cy: ay + (by - ay) * r.value,
    vx: (bx - ax) * r.rate, vy: (by - ay) * r.rate,
  };
}

const BIPOLE_FLUX = 3.2e21;
const SHEAR_MM = 8;
const TURN_RAD = (92 * Math.PI) / 180;
const UMBRA_OFFSET_MM = 6;

/** The components of the demo region at scenario hour `t` (0..72). */
export function demoComponents(t: number): DemoComponent[] {
  const emerge = ramp(t, 2, 30);
  const shear = ramp(t, 8, 44);
  const turn = ramp(t, 8, 44);
  // Separation of leading and following spot centres grows from 10 to 36 Mm with the flux.
  const half = 5 + 13 * emerge.value;
  const halfRate = 13 * emerge.rate;
  const s = SHEAR_MM * shear.value;
  const sRate = SHEAR_MM * shear.rate;
  const out: DemoComponent[] = [];
  if (emerge.value > 0) {
    const f = BIPOLE_FLUX * emerge.value;
    // The leading spot: an elliptical core with two smaller umbral cores on its major axis, all
    // turning rigidly about the spot centre (a pattern whose rotation can be seen in the frames).
    const angle = 0.35 + TURN_RAD * turn.value;
    const omega = TURN_RAD * turn.rate;
    const cx = half, cy = 4 - s, vx = halfRate, vy = -sRate;
    out.push({ label: 1, flux: 0.7 * f, cx, cy, vx, vy, sigmaMajor: 4.4, sigmaMinor: 3.0, angle, omega });
    for (const side of [1, -1]) {
      const ox = side * UMBRA_OFFSET_MM * Math.cos(angle), oy = side * UMBRA_OFFSET_MM * Math.sin(angle);
      // A point turning with the spot moves at V + omega z x (c - C).
      out.push({
        label: 1, flux: 0.15 * f, cx: cx + ox, cy: cy + oy, vx: vx - omega * oy, vy: vy + omega * ox,
        sigmaMajor: 2.0, sigmaMinor: 2.0, angle, omega,
      });
    }
    out.push({
      label: 2, flux: -0.69 * f, cx: -half, cy: -4 + s, vx: -halfRate, vy: sRate,
      sigmaMajor: 5.5, sigmaMinor: 5.5, angle: 0, omega: 0,
    });
    out.push({
      label: 3, flux: -0.31 * f, cx: -half - 9, cy: -9 + s, vx: -halfRate, vy: sRate,
      sigmaMajor: 3.5, sigmaMinor: 3.5, angle: 0, omega: 0,
    });
  }
  const small = (label: number, flux: number, m: { cx: number; cy: number; vx: number; vy: number }, sigma = 1.5): DemoComponent => ({
    label, flux, ...m, sigmaMajor: sigma, sigmaMinor: sigma, angle: 0, omega: 0,
  });
  // Footpoints drifting away from the leading spot (a moat-like outflow).
  out.push(small(4, 1.5e20, glide(t, 10, 36, 26, 14, 36, 24)));
  out.push(small(5, -1.2e20, glide(t, 12, 36, 30, -10, 38, -22)));
  // Two small negative footpoints converging; from 34 h on they are one footpoint.
  const merged = t >= 34;
  out.push(small(6, -2.0e20, glide(t, 14, 34, -32, 24, -26, 27)));
  out.push(small(merged ? 6 : 7, -1.6e20, glide(t, 14, 34, -20, 31, -26, 27)));
  // A plage footpoint that stays put (reference for trackers).
  out.push(small(8, 1.0e20, { cx: 10, cy: -30, vx: 0, vy: 0 }, 2.0));
  return out;
}
