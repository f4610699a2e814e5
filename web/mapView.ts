// The Boundary map: bn (or bn in grey under the G_theta density) on a canvas, with the colour bar
// in its unit, footpoint outlines and ids, tracks over recent frames, a rotation glyph for each
// footpoint, and the highlighted footpoint. The raster is built once per map; a change of
// highlight only redraws the vector layer over the cached image.

import { buildLut, GREYS, niceCeil, PURPLE_ORANGE, rasterize, robustAbsLimit, symmetricTicks } from './colourScale.js';
import { pixelToWorld } from '../core/frameAssembly/wcs.js';
import { axisTicks, edgeTicks, scaleBar, tickStep, tickText } from './mapAxes.js';
import type { MapWcs } from './wire.js';
import { equalAreaRadius, fitMap, fromCanvas, glyphArc, hitFootpoint, splitTrack, toCanvas, type MapFit } from './mapGeometry.js';
import { OKABE_ITO } from './palette.js';
import { rotationCell } from './ledgerCells.js';
import { formatGauss, formatSci, NO_VALUE, omegaDegPerHour, prettyUnit } from './unitFormat.js';
import type { WireFootpoint } from './wire.js';

export interface MapLayer {
  data: Float32Array;
  nx: number;
  ny: number;
  dx: number;
  dy: number;
  unit: string;
  /** Heliographic (or other spherical) world coordinates of the pixels, when the monitor sends them. */
  wcs?: MapWcs;
}

export interface MapScene {
  frameId: string | number;
  time: number;
  bn: MapLayer;
  gtheta?: MapLayer;
  footpoints: WireFootpoint[];
  tracks: Record<string, [number, number][]>;
}

export interface MapDrawReport {
  footpoints: number;
  outlines: number;
  glyphs: number;
  tracks: number;
  highlighted: string | null;
  rasterMs: number;
  drawMs: number;
  /** Tick labels drawn on the axes (Mm), the degree axes (top, right) when the frame has a WCS, and the scale bar's text. */
  axes: { x: string[]; y: string[]; lon: string[]; lat: string[]; worldAxes: string; scaleBar: string };
  /** Where the map image lies on its canvas, CSS px. */
  rect: { x: number; y: number; w: number; h: number };
}

/** What the map shows under the pointer. */
export interface MapProbe {
  xMm: number;
  yMm: number;
  bn: number | null;
  /** undefined: the G_theta layer is not loaded (yet); null: no data at that pixel. */
  gtheta: number | null | undefined;
  gthetaUnit: string;
  /** Heliographic longitude and latitude of the pixel, degrees, and their frame, when the map has a WCS. */
  world?: { lon: number; lat: number; name: string };
}

/** Room around the map for the axes (CSS px). */
const MARGIN = { left: 44, right: 8, top: 6, bottom: 34 };
const NO_AXES = { x: [] as string[], y: [] as string[], lon: [] as string[], lat: [] as string[], worldAxes: '', scaleBar: '' };
/** Extra room for the degree axes (top and right) when the frame has world coordinates. */
const WORLD_MARGIN = { top: 30, right: 58 };

const PURPLE_ORANGE_LUT = buildLut(PURPLE_ORANGE, 256);
/** A track step longer than this (or twice the footpoint's radius) is a hand-over, not motion, Mm. */
const TRACK_JUMP_MM = 5;
const GREY_LUT = buildLut(GREYS, 256);

export class MapView {
  readonly canvas: HTMLCanvasElement;
  readonly bar: HTMLCanvasElement;
  private readonly image = document.createElement('canvas');
  private scene: MapScene | undefined;
  private overlay = false;
  private highlighted: string | null = null;
  private fit: MapFit | undefined;
  private limit = 1;
  private barUnit = 'G';
  /** The bn colour range, G: null until the first frame sets it (or the user picks one), then kept
   *  for every later frame so colours compare across frames. */
  private bnFixed: number | null = null;
  private bnUserSet = false;
  /** The G_theta overlay range, kept across frames in the same way. */
  private gFixed: number | null = null;
  report: MapDrawReport = { footpoints: 0, outlines: 0, glyphs: 0, tracks: 0, highlighted: null, rasterMs: 0, drawMs: 0, axes: NO_AXES, rect: { x: 0, y: 0, w: 0, h: 0 } };
  onPick: ((id: string | null) => void) | undefined;

  constructor(canvas: HTMLCanvasElement, bar: HTMLCanvasElement) {
    this.canvas = canvas;
    this.bar = bar;
    canvas.addEventListener('click', (ev) => this.pickAt(ev.offsetX, ev.offsetY));
  }

  hasScene(): boolean {
    return this.scene !== undefined;
  }

  currentFrameId(): string | number | undefined {
    return this.scene?.frameId;
  }

  /** Data time of the frame shown, UTC ms (NaN without one). */
  currentTime(): number {
    return this.scene?.time ?? Number.NaN;
  }

  setScene(scene: MapScene): void {
    this.scene = scene;
    this.rasterizeScene();
    this.draw();
  }

  /** Back to "no frame yet" (a region switch). */
  clear(): void {
    this.scene = undefined;
    this.fit = undefined;
    this.highlighted = null;
    if (!this.bnUserSet) this.bnFixed = null;
    this.gFixed = null;
    this.report = { footpoints: 0, outlines: 0, glyphs: 0, tracks: 0, highlighted: null, rasterMs: 0, drawMs: 0, axes: NO_AXES, rect: { x: 0, y: 0, w: 0, h: 0 } };
    this.draw();
  }

  /** Adds the G_theta layer to the frame shown (loaded later, for the overlay or the hover readout). */
  setGtheta(frameId: string | number, layer: MapLayer): void {
    if (!this.scene || String(this.scene.frameId) !== String(frameId)) return;
    this.scene = { ...this.scene, gtheta: layer };
    if (this.overlay) {
      this.rasterizeScene();
      this.draw();
    }
  }

  hasGtheta(): boolean {
    return this.scene?.gtheta !== undefined;
  }

  /** The values under canvas position (px, py), CSS px; undefined off the map. */
  probeAt(px: number, py: number): MapProbe | undefined {
    const s = this.scene;
    const fit = this.fit;
    if (!s || !fit) return undefined;
    const [x, y] = fromCanvas(fit, px, py);
    const ix = Math.round(x / fit.dx);
    const iy = Math.round(y / fit.dy);
    if (ix < 0 || iy < 0 || ix >= s.bn.nx || iy >= s.bn.ny) return undefined;
    const at = (layer: MapLayer): number | null => {
      const v = layer.data[iy * layer.nx + ix];
      return Number.isFinite(v) ? v : null;
    };
    const hg = heliographic(s.bn.wcs);
    const w = hg ? pixelToWorld(hg.wcs, ix + 1, iy + 1) : undefined;
    return {
      xMm: x, yMm: y, bn: at(s.bn), gtheta: s.gtheta ? at(s.gtheta) : undefined, gthetaUnit: s.gtheta?.unit ?? '',
      ...(w && hg && { world: { lon: w[0], lat: w[1], name: hg.name } }),
    };
  }

  setOverlay(on: boolean): void {
    this.overlay = on;
    if (this.scene) {
      this.rasterizeScene();
      this.draw();
    }
  }

  overlayOn(): boolean {
    return this.overlay;
  }

  /** The symmetric bn colour range in G (null before the first frame). */
  bnRange(): number | null {
    return this.bnFixed;
  }

  /** The colour limit the bar shows now (bn in G, or G_theta under the overlay). */
  colourLimit(): number {
    return this.limit;
  }

  /** Sets the bn range to +-limit G for every frame, or (null) back to the range taken from the
   *  next frame drawn and kept from then on. */
  setBnRange(limit: number | null): void {
    this.bnUserSet = limit !== null;
    this.bnFixed = limit !== null && limit > 0 ? limit : null;
    if (this.scene) {
      this.rasterizeScene();
      this.draw();
    }
  }

  /** The unit the colour bar shows now: G for bn, the G_theta unit under the overlay. */
  colourBarUnit(): string {
    return this.barUnit;
  }

  setHighlight(id: string | number | null): void {
    this.highlighted = id === null ? null : String(id);
    this.draw();
  }

  /** Builds the cached raster: bn in purple-orange, or grey bn under the G_theta density. */
  private rasterizeScene(): void {
    const s = this.scene;
    if (!s) return;
    const t0 = performance.now();
    const { nx, ny } = s.bn;
    this.image.width = nx;
    this.image.height = ny;
    const ctx = this.image.getContext('2d');
    if (!ctx) return;
    const img = ctx.createImageData(nx, ny);
    // Taken once, from the first frame, then kept: a colour means the same field in every frame.
    const bnLimit = (this.bnFixed ??= niceCeil(robustAbsLimit(s.bn.data)));
    const useOverlay = this.overlay && s.gtheta !== undefined;
    if (!useOverlay) {
      rasterize(s.bn.data, nx, ny, PURPLE_ORANGE_LUT, bnLimit, img.data);
      this.limit = bnLimit;
      this.barUnit = 'G';
    } else {
      const g = s.gtheta as MapLayer;
      rasterize(s.bn.data, nx, ny, GREY_LUT, bnLimit, img.data);
      const over = ctx.createImageData(nx, ny);
      const gLimit = (this.gFixed ??= niceCeil(robustAbsLimit(g.data)));
      rasterize(g.data, nx, ny, PURPLE_ORANGE_LUT, gLimit, over.data, { alphaByValue: true, noDataAlpha: 0 });
      // Blend the density over the grey field: out = a*over + (1-a)*grey.
      const o = img.data;
      const v = over.data;
      for (let i = 0; i < o.length; i += 4) {
        const a = v[i + 3] / 255;
        o[i] = v[i] * a + o[i] * (1 - a);
        o[i + 1] = v[i + 1] * a + o[i + 1] * (1 - a);
        o[i + 2] = v[i + 2] * a + o[i + 2] * (1 - a);
      }
      this.limit = gLimit;
      this.barUnit = g.unit;
    }
    ctx.putImageData(img, 0, 0);
    this.report.rasterMs = performance.now() - t0;
  }

  /** Canvas size in CSS px follows its box; the backing store follows the device pixel ratio. */
  private sizeCanvas(c: HTMLCanvasElement): { w: number; h: number; ratio: number } {
    const ratio = window.devicePixelRatio || 1;
    const w = Math.max(50, c.clientWidth);
    const h = Math.max(50, c.clientHeight);
    if (c.width !== Math.round(w * ratio) || c.height !== Math.round(h * ratio)) {
      c.width = Math.round(w * ratio);
      c.height = Math.round(h * ratio);
    }
    return { w, h, ratio };
  }

  draw(): void {
    const t0 = performance.now();
    const { w, h, ratio } = this.sizeCanvas(this.canvas);
    const ctx = this.canvas.getContext('2d');
    if (!ctx) return;
    ctx.setTransform(ratio, 0, 0, ratio, 0, 0);
    ctx.fillStyle = '#ffffff';
    ctx.fillRect(0, 0, w, h);
    const s = this.scene;
    if (!s) {
      ctx.fillStyle = '#333';
      ctx.font = '14px system-ui, sans-serif';
      ctx.textAlign = 'center';
      ctx.fillText('no frame yet', w / 2, h / 2);
      this.drawBar();
      return;
    }
    const world = heliographic(s.bn.wcs);
    const top = MARGIN.top + (world ? WORLD_MARGIN.top : 0);
    const right = MARGIN.right + (world ? WORLD_MARGIN.right : 0);
    const inner = fitMap(s.bn.nx, s.bn.ny, s.bn.dx, s.bn.dy, w - MARGIN.left - right, h - top - MARGIN.bottom);
    // Centred across, at the top of its box (the caption and controls are above it).
    const fit = { ...inner, offX: inner.offX + MARGIN.left, offY: top };
    this.fit = fit;
    ctx.imageSmoothingEnabled = fit.sx < 1; // upscaled maps show their pixels
    ctx.drawImage(this.image, fit.offX, fit.offY, s.bn.nx * fit.sx, s.bn.ny * fit.sy);
    ctx.save();
    ctx.beginPath();
    ctx.rect(fit.offX, fit.offY, s.bn.nx * fit.sx, s.bn.ny * fit.sy);
    ctx.clip();
    const rep = this.drawFootpoints(ctx, s, fit);
    const bar = this.drawScaleBar(ctx, fit);
    ctx.restore();
    const axes = this.drawAxes(ctx, fit);
    const degrees = world ? this.drawWorldAxes(ctx, fit, world) : { lon: [], lat: [], worldAxes: '' };
    this.drawBar();
    this.report = { ...rep, axes: { ...axes, ...degrees, scaleBar: bar }, rect: { x: fit.offX, y: fit.offY, w: fit.nx * fit.sx, h: fit.ny * fit.sy }, rasterMs: this.report.rasterMs, drawMs: performance.now() - t0 };
  }

  /** Axes in Mm along the bottom and the left of the map: x = ix·dx at pixel centres, +y up. */
  private drawAxes(ctx: CanvasRenderingContext2D, fit: MapFit): { x: string[]; y: string[] } {
    const x0 = fit.offX;
    const y0 = fit.offY;
    const wPx = fit.nx * fit.sx;
    const hPx = fit.ny * fit.sy;
    const xMax = (fit.nx - 0.5) * fit.dx;
    const yMax = (fit.ny - 0.5) * fit.dy;
    ctx.save();
    ctx.strokeStyle = '#333';
    ctx.lineWidth = 1;
    ctx.strokeRect(Math.round(x0) + 0.5, Math.round(y0) + 0.5, Math.round(wPx) - 1, Math.round(hPx) - 1);
    ctx.fillStyle = '#222';
    ctx.font = '11px system-ui, sans-serif';
    const xs: string[] = [];
    const ys: string[] = [];
    ctx.textAlign = 'center';
    ctx.textBaseline = 'top';
    for (const v of axisTicks(-fit.dx / 2, xMax, Math.max(2, Math.floor(wPx / 60)))) {
      const [px] = toCanvas(fit, v, 0);
      ctx.fillRect(Math.round(px), y0 + hPx, 1, 4);
      const t = tickText(v);
      ctx.fillText(t, px, y0 + hPx + 5);
      xs.push(t);
    }
    ctx.fillText('x (Mm)', x0 + wPx / 2, y0 + hPx + 19);
    ctx.textAlign = 'right';
    ctx.textBaseline = 'middle';
    for (const v of axisTicks(-fit.dy / 2, yMax, Math.max(2, Math.floor(hPx / 45)))) {
      const [, py] = toCanvas(fit, 0, v);
      ctx.fillRect(x0 - 4, Math.round(py), 4, 1);
      const t = tickText(v);
      ctx.fillText(t, x0 - 6, py);
      ys.push(t);
    }
    ctx.translate(10, y0 + hPx / 2);
    ctx.rotate(-Math.PI / 2);
    ctx.textAlign = 'center';
    ctx.fillText('y (Mm)', 0, 0);
    ctx.restore();
    return { x: xs, y: ys };
  }

  /**
   * Degree axes from the frame's WCS: longitude along the top edge, latitude along the right edge,
   * ticks where the edge pixels' world values cross round degrees (core's pixelToWorld, checked
   * against astropy in test/fits/wcs.test.ts). Along a tilted or oblique projection these are the
   * values at the edge, which is what an edge tick says.
   */
  private drawWorldAxes(ctx: CanvasRenderingContext2D, fit: MapFit, world: { wcs: MapWcs; name: string }): { lon: string[]; lat: string[]; worldAxes: string } {
    const { wcs, name } = world;
    const nx = fit.nx;
    const ny = fit.ny;
    // FITS pixels are 1-based, at pixel centres; the top row of the picture is row ny.
    const top = Array.from({ length: nx }, (_, i) => pixelToWorld(wcs, i + 1, ny)?.[0] ?? Number.NaN);
    const side = Array.from({ length: ny }, (_, j) => pixelToWorld(wcs, nx, j + 1)?.[1] ?? Number.NaN);
    const x0 = fit.offX;
    const y0 = fit.offY;
    const wPx = nx * fit.sx;
    const hPx = ny * fit.sy;
    const lon: string[] = [];
    const lat: string[] = [];
    ctx.save();
    ctx.fillStyle = '#222';
    ctx.font = '11px system-ui, sans-serif';
    ctx.textAlign = 'center';
    ctx.textBaseline = 'bottom';
    const lonTicks = edgeTicks(top, Math.max(2, Math.floor(wPx / 70)), true);
    const lonStep = tickStep(lonTicks.map((t) => t.value));
    for (const t of lonTicks) {
      const px = x0 + (t.pos + 0.5) * fit.sx;
      ctx.fillRect(Math.round(px), y0 - 4, 1, 4);
      const text = `${tickText(t.value, lonStep)}°`;
      ctx.fillText(text, px, y0 - 5);
      lon.push(text);
    }
    ctx.fillText(`${name} longitude (°), along the top edge`, x0 + wPx / 2, y0 - 18);
    ctx.textAlign = 'left';
    ctx.textBaseline = 'middle';
    const latTicks = edgeTicks(side, Math.max(2, Math.floor(hPx / 45)));
    const latStep = tickStep(latTicks.map((t) => t.value));
    let widest = 0;
    for (const t of latTicks) {
      const py = y0 + hPx - (t.pos + 0.5) * fit.sy;
      ctx.fillRect(x0 + wPx, Math.round(py), 4, 1);
      const text = `${tickText(t.value, latStep)}°`;
      ctx.fillText(text, x0 + wPx + 6, py);
      widest = Math.max(widest, ctx.measureText(text).width);
      lat.push(text);
    }
    // The axis title beyond the widest label (its centre line, 11 px text rotated).
    ctx.translate(x0 + wPx + 6 + widest + 9, y0 + hPx / 2);
    ctx.rotate(Math.PI / 2);
    ctx.textAlign = 'center';
    ctx.fillText(`${name} latitude (°)`, 0, 0);
    ctx.restore();
    return { lon, lat, worldAxes: name };
  }

  /** A scale bar of a round length in the bottom-right corner of the map, on a light plate. */
  private drawScaleBar(ctx: CanvasRenderingContext2D, fit: MapFit): string {
    const pxPerMm = fit.sx / fit.dx;
    const bar = scaleBar(pxPerMm, Math.min(120, (fit.nx * fit.sx) / 4));
    if (bar.px < 8) return '';
    const text = `${tickText(bar.mm)} Mm`;
    const right = fit.offX + fit.nx * fit.sx - 8;
    const bottom = fit.offY + fit.ny * fit.sy - 8;
    ctx.font = '11px system-ui, sans-serif';
    const tw = ctx.measureText(text).width;
    const plateW = Math.max(bar.px, tw) + 10;
    ctx.fillStyle = 'rgba(255,255,255,0.85)';
    ctx.fillRect(right - plateW, bottom - 24, plateW, 24);
    ctx.fillStyle = '#000';
    ctx.fillRect(right - 5 - bar.px, bottom - 7, bar.px, 3);
    ctx.textAlign = 'center';
    ctx.textBaseline = 'alphabetic';
    ctx.fillText(text, right - 5 - bar.px / 2, bottom - 11);
    return text;
  }

  private drawFootpoints(ctx: CanvasRenderingContext2D, s: MapScene, fit: MapFit): Omit<MapDrawReport, 'rasterMs' | 'drawMs' | 'axes' | 'rect'> {
    const pxPerMm = fit.sx / fit.dx;
    let outlines = 0;
    let glyphs = 0;
    let tracks = 0;
    let highlighted: string | null = null;
    // Tracks first, under everything else.
    ctx.lineCap = 'round';
    ctx.lineJoin = 'round';
    const areaOf = new Map(s.footpoints.map((fp) => [String(fp.id), fp.area]));
    for (const [id, pts] of Object.entries(s.tracks ?? {})) {
      if (!pts || pts.length < 2) continue;
      const hi = String(id) === this.highlighted;
      const maxStep = Math.max(TRACK_JUMP_MM, 2 * equalAreaRadius(areaOf.get(String(id)) ?? 0));
      for (const run of splitTrack(pts, maxStep)) {
        if (run.length >= 2) {
          ctx.beginPath();
          run.forEach(([x, y], i) => {
            const [px, py] = toCanvas(fit, x, y);
            if (i === 0) ctx.moveTo(px, py);
            else ctx.lineTo(px, py);
          });
          ctx.strokeStyle = '#ffffff';
          ctx.lineWidth = hi ? 5 : 3.5;
          ctx.stroke();
          ctx.strokeStyle = hi ? '#000000' : '#222222';
          ctx.lineWidth = hi ? 2.5 : 1.5;
          ctx.setLineDash([1, 3]);
          ctx.stroke();
          ctx.setLineDash([]);
        }
        for (const [x, y] of run) {
          const [px, py] = toCanvas(fit, x, y);
          ctx.fillStyle = '#222222';
          ctx.fillRect(px - 1, py - 1, 2, 2);
        }
      }
      tracks++;
    }
    const labels: { text: string; x: number; y: number; hi: boolean }[] = [];
    for (const fp of s.footpoints) {
      const hi = String(fp.id) === this.highlighted;
      if (hi) highlighted = String(fp.id);
      const [cx, cy] = toCanvas(fit, fp.x, fp.y);
      const r = Math.max(4, equalAreaRadius(fp.area) * pxPerMm);
      ctx.beginPath();
      if (fp.outline && fp.outline.length >= 3) {
        fp.outline.forEach(([x, y], i) => {
          const [px, py] = toCanvas(fit, x, y);
          if (i === 0) ctx.moveTo(px, py);
          else ctx.lineTo(px, py);
        });
        ctx.closePath();
      } else ctx.arc(cx, cy, r, 0, 2 * Math.PI);
      // A white halo under a dark line reads on both ends of the colour scale.
      ctx.setLineDash([]);
      ctx.strokeStyle = '#ffffff';
      ctx.lineWidth = hi ? 7 : 3.5;
      ctx.stroke();
      ctx.strokeStyle = hi ? OKABE_ITO.black : '#111111';
      ctx.lineWidth = hi ? 3.5 : 1.5;
      // Negative footpoints get a dashed outline: polarity does not rest on colour.
      if (fp.polarity < 0) ctx.setLineDash([5, 3]);
      ctx.stroke();
      ctx.setLineDash([]);
      if (hi) {
        ctx.strokeStyle = OKABE_ITO.yellow;
        ctx.lineWidth = 2;
        ctx.stroke();
      }
      outlines++;
      if (this.drawGlyph(ctx, fp, cx, cy, Math.max(6, Math.min(r * 0.6, 18)))) glyphs++;
      labels.push({ text: String(fp.id), x: cx + r * 0.72 + 2, y: cy - r * 0.72 - 2, hi });
    }
    // Ids last, so no outline covers them; on a light plate beside each footpoint.
    for (const l of labels) {
      ctx.font = `${l.hi ? 'bold 13px' : '12px'} system-ui, sans-serif`;
      const tw = ctx.measureText(l.text).width;
      ctx.fillStyle = l.hi ? OKABE_ITO.yellow : 'rgba(255,255,255,0.85)';
      ctx.fillRect(l.x - 2, l.y - 12, tw + 4, 15);
      ctx.fillStyle = '#000000';
      ctx.textAlign = 'left';
      ctx.textBaseline = 'alphabetic';
      ctx.fillText(l.text, l.x, l.y);
    }
    return { footpoints: s.footpoints.length, outlines, glyphs, tracks, highlighted };
  }

  /** Rotation glyph: an arrowed arc whose sense is the rotation sense and whose sweep grows with |omega|. */
  private drawGlyph(ctx: CanvasRenderingContext2D, fp: WireFootpoint, cx: number, cy: number, r: number): boolean {
    const arc = glyphArc(fp.omega === null ? null : omegaDegPerHour(fp.omega));
    if (!arc || fp.omega_method === 'unobservable' || rotationCell(fp).text === NO_VALUE) {
      // Unmeasured rotation (or one within its error, shown "—" in the ledger): a small hollow ring.
      ctx.beginPath();
      ctx.arc(cx, cy, 3, 0, 2 * Math.PI);
      ctx.strokeStyle = '#000';
      ctx.lineWidth = 1;
      ctx.stroke();
      return false;
    }
    const stroke = (color: string, width: number): void => {
      ctx.beginPath();
      ctx.arc(cx, cy, r, arc.start, arc.end, arc.anticlockwise);
      ctx.strokeStyle = color;
      ctx.lineWidth = width;
      ctx.stroke();
    };
    stroke('#ffffff', 4);
    stroke('#000000', 2);
    // Arrowhead at the end, pointing along the direction of travel.
    const ex = cx + r * Math.cos(arc.end);
    const ey = cy + r * Math.sin(arc.end);
    const dir = arc.end + (arc.anticlockwise ? -Math.PI / 2 : Math.PI / 2);
    const size = 6;
    ctx.beginPath();
    ctx.moveTo(ex + size * Math.cos(dir), ey + size * Math.sin(dir));
    ctx.lineTo(ex + size * 0.6 * Math.cos(dir + 2.3), ey + size * 0.6 * Math.sin(dir + 2.3));
    ctx.lineTo(ex + size * 0.6 * Math.cos(dir - 2.3), ey + size * 0.6 * Math.sin(dir - 2.3));
    ctx.closePath();
    ctx.fillStyle = '#000000';
    ctx.strokeStyle = '#ffffff';
    ctx.lineWidth = 1;
    ctx.fill();
    ctx.stroke();
    return true;
  }

  /** The colour bar: the scale from -limit (bottom) to +limit (top), ticks in the map's unit. */
  private drawBar(): void {
    const { w, h, ratio } = this.sizeCanvas(this.bar);
    const ctx = this.bar.getContext('2d');
    if (!ctx) return;
    ctx.setTransform(ratio, 0, 0, ratio, 0, 0);
    ctx.fillStyle = '#ffffff';
    ctx.fillRect(0, 0, w, h);
    if (!this.scene) return;
    ctx.font = 'bold 11px system-ui, sans-serif';
    ctx.fillStyle = '#000';
    ctx.textBaseline = 'top';
    ctx.textAlign = 'left';
    const title = this.barUnit === 'G' ? 'bn (G)' : `G_θ (${prettyUnit(this.barUnit)})`;
    const titleLines = wrapText(ctx, title, 2, 2, w - 4, 13);
    const top = 2 + titleLines * 13 + 8;
    const bottom = h - 14;
    const bw = 16;
    const lut = PURPLE_ORANGE_LUT;
    const n = lut.length / 3;
    for (let y = top; y < bottom; y++) {
      const k = Math.round(((bottom - y) / (bottom - top)) * (n - 1));
      ctx.fillStyle = `rgb(${lut[3 * k]},${lut[3 * k + 1]},${lut[3 * k + 2]})`;
      ctx.fillRect(4, y, bw, 1);
    }
    ctx.strokeStyle = '#000';
    ctx.lineWidth = 1;
    ctx.strokeRect(4.5, top + 0.5, bw, bottom - top);
    ctx.fillStyle = '#000';
    ctx.font = '11px system-ui, sans-serif';
    ctx.textBaseline = 'middle';
    ctx.textAlign = 'left';
    for (const t of symmetricTicks(this.limit, 5)) {
      const y = bottom - ((t + this.limit) / (2 * this.limit)) * (bottom - top);
      ctx.fillRect(4 + bw, Math.round(y), 4, 1);
      const text = this.barUnit === 'G' ? formatGauss(t).replace(' G', '') : formatSci(t, 2);
      ctx.fillText(text, bw + 10, y);
    }
  }

  private pickAt(px: number, py: number): void {
    if (!this.scene || !this.fit) return;
    const [x, y] = fromCanvas(this.fit, px, py);
    const pxPerMm = this.fit.sx / this.fit.dx;
    const hit = hitFootpoint(this.scene.footpoints, x, y, 6 / pxPerMm);
    this.onPick?.(hit === undefined ? null : String(hit.id));
  }

  /** The map with its colour bar as one PNG. */
  toPng(): Promise<Blob | null> {
    const out = document.createElement('canvas');
    out.width = this.canvas.width + this.bar.width;
    out.height = Math.max(this.canvas.height, this.bar.height);
    const ctx = out.getContext('2d');
    if (!ctx) return Promise.resolve(null);
    ctx.fillStyle = '#fff';
    ctx.fillRect(0, 0, out.width, out.height);
    ctx.drawImage(this.canvas, 0, 0);
    ctx.drawImage(this.bar, this.canvas.width, 0);
    return new Promise((resolve) => out.toBlob((b) => resolve(b), 'image/png'));
  }
}

/** Draws text wrapped at spaces; answers the number of lines. */
function wrapText(ctx: CanvasRenderingContext2D, text: string, x: number, y: number, width: number, lineHeight: number): number {
  const words = text.split(' ');
  let line = '';
  let yy = y;
  let lines = 0;
  for (const word of words) {
    const next = line ? `${line} ${word}` : word;
    if (ctx.measureText(next).width > width && line) {
      ctx.fillText(line, x, yy);
      lines++;
      line = word;
      yy += lineHeight;
    } else line = next;
  }
  if (line) {
    ctx.fillText(line, x, yy);
    lines++;
  }
  return lines;
}

/** The frame's WCS when its axes are heliographic (Carrington or Stonyhurst), with their name. */
function heliographic(wcs: MapWcs | undefined): { wcs: MapWcs; name: string } | undefined {
  const head = wcs?.ctype[0]?.slice(0, 4).toUpperCase();
  if (!wcs || (head !== 'CRLN' && head !== 'HGLN')) return undefined;
  return { wcs, name: head === 'CRLN' ? 'Carrington' : 'Stonyhurst' };
}
