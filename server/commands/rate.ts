// `helicord rate FRAME [FRAME2]`: the injection rate of a frame (or of a frame pair, with the
// velocity inferred between them when the frames carry none), as one JSON object.
import { readFile } from 'node:fs/promises';
import type { FluxKernelCache } from '../../core/fluxKernel.js';
import type { Frame } from '../../core/frame.js';
import type { AnalysisSettings, FrameAnalysis } from '../../core/frameAnalysis.js';
import { analyseFrame } from '../../core/frameAnalysis.js';
import { footpointReport } from '../../core/footpoints/footpointReport.js';
import { InputError } from '../../core/inputError.js';
import type { RateSample } from '../../core/rateSample.js';
import { rateSample } from '../../core/rateSample.js';
import type { VelocityMethod } from '../../core/velocity/velocitySettings.js';
import { loadFrameFile } from '../../replay/frameFiles.js';
import type { ParsedArgs } from './args.js';
import { numberFlag, stringFlag } from './args.js';

async function labelsFromFile(frame: Frame, path: string, source: string): Promise<Int32Array> {
  let json: unknown;
  try {
    json = JSON.parse(await readFile(path, 'utf8'));
  } catch (e) {
    throw new InputError(path, '(file)', `cannot be read as JSON: ${(e as Error).message}`);
  }
  const arr = Array.isArray(json) ? json : (json as { labels?: unknown }).labels;
  if (!Array.isArray(arr) || arr.length !== frame.nx * frame.ny || !arr.every((v) => Number.isInteger(v) && v >= 0)) {
    throw new InputError(path, 'labels', `must be ${frame.nx * frame.ny} non-negative integers to match ${source}`);
  }
  return Int32Array.from(arr as number[]);
}

const METHODS = new Set(['lct', 'dave', 'dave4vm', 'auto']);

function settingsFrom(args: ParsedArgs): AnalysisSettings {
  const method = stringFlag(args, 'method');
  if (method !== undefined && !METHODS.has(method)) throw new Error(`option --method must be lct, dave, dave4vm or auto, got "${method}"`);
  const sigma = numberFlag(args, 'window');
  const noiseG = numberFlag(args, 'noise');
  return {
    ...(noiseG !== undefined && { noiseG }),
    velocity: { ...(method && { method: method as VelocityMethod | 'auto' }), ...(sigma !== undefined && { sigma }) },
    ...(noiseG !== undefined && { footpoints: { noise: noiseG } }),
  };
}

function sampleJson(s: RateSample): Record<string, unknown> {
  return {
    time: new Date(s.time).toISOString(),
    dt_s: s.dtS,
    total: s.total,
    total_ga: s.totalGa,
    spin: s.spin,
    orbit: s.orbit,
    background: s.background,
    ...(s.emergence !== undefined && { emergence: s.emergence, shear: s.shear }),
    sigma_total: s.sigmaTotal,
    noise_g: s.noiseG,
    masked_fraction: s.maskedFraction,
    velocity_method: s.velocityMethod,
    split_method: s.splitMethod,
    flags: s.flags,
    unit: 'Mx^2/s',
  };
}

export async function rateCommand(args: ParsedArgs, out: NodeJS.WritableStream): Promise<number> {
  const files = args.positional;
  if (files.length < 1 || files.length > 2) throw new Error('give one frame file, or two consecutive frames');
  const frames = await Promise.all(files.map((f) => loadFrameFile(f)));
  const frame = frames[frames.length - 1];
  const labelsOption = stringFlag(args, 'labels') ?? (frames.length === 1 && frame.labels ? 'from-file' : 'detect');
  const settings = settingsFrom(args);

  if (labelsOption !== 'detect') {
    // Labels given (in the frame, or a file) or none: one frame that carries its velocity.
    if (frames.length === 2) throw new Error('--labels from-file, none or FILE take one frame that carries its velocity; two frames need --labels detect');
    const labels = labelsOption === 'none' ? null
      : labelsOption === 'from-file' ? frame.labels ?? null
        : await labelsFromFile(frame, labelsOption, files[0]);
    const r = rateSample({ frame, labels, ...(settings.noiseG !== undefined && { noiseG: settings.noiseG }) });
    const result = sampleJson(r.sample);
    if (args.flags.footpoints && r.split) {
      const k = r.split.ids.length;
      result.footpoints = r.split.ids.map((id, a) => ({ id, spin: r.split!.spin[a] }));
      result.pair_ids = r.split.ids;
      result.orbit_matrix = Array.from({ length: k }, (_, a) => Array.from(r.split!.orbit.subarray(a * k, (a + 1) * k)));
    }
    out.write(JSON.stringify(result, null, 2) + '\n');
    return 0;
  }

  // Footpoints detected and tracked; the velocity given by the last frame or inferred between the two.
  const cache: FluxKernelCache = new Map();
  let analysis: FrameAnalysis = analyseFrame(frames[0], {}, settings, cache);
  if (frames.length === 2) analysis = analyseFrame(frames[1], analysis.state, settings, cache);
  if (!analysis.sample) throw new InputError(files[files.length - 1], 'vx/vy', `${analysis.waiting}; give the next frame as a second file`);
  const result = sampleJson(analysis.sample);
  if (analysis.velocityNotes.length > 0) result.velocity_notes = analysis.velocityNotes;
  if (analysis.footpoints) {
    result.spin_point = analysis.footpoints.point.spin;
    result.orbit_point = analysis.footpoints.point.orbit;
    result.footpoint_count = analysis.footpoints.footpoints.length;
    if (args.flags.footpoints) result.footpoints = footpointReport(analysis.footpoints, true);
  }
  out.write(JSON.stringify(result, null, 2) + '\n');
  return 0;
}
