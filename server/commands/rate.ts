// `helicord rate FRAME [FRAME ...]`: the injection rate of a frame, or of the last pair of a
// sequence of frames, as one JSON object. The frames go through the pipeline's per-frame step in
// time order with its state carried from one to the next, as the monitor does: footpoints are
// tracked through all of them, and with frames that carry no velocity the footpoint motions of the
// last pair are measured over the motion baseline when earlier frames reach back that far. A frame
// that carries its velocity gives a sample of its own: the last frame's sample is the one printed,
// and `sample_frames` says which frames it came from.
import { readFile } from 'node:fs/promises';
import type { FluxKernelCache } from '../../core/fluxKernel.js';
import type { Frame } from '../../core/frame.js';
import type { AnalysisSettings, AnalysisState, FrameAnalysis } from '../../core/frameAnalysis.js';
import { analyseFrame } from '../../core/frameAnalysis.js';
import { hasVelocity } from '../../core/frame.js';
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

/** The frames of the command line in time order; a time given twice is refused, naming both files. */
async function framesInTimeOrder(files: readonly string[]): Promise<{ file: string; frame: Frame }[]> {
  const loaded = await Promise.all(files.map(async (file) => ({ file, frame: await loadFrameFile(file) })));
  const ordered = [...loaded].sort((a, b) => a.frame.time - b.frame.time);
  for (let k = 1; k < ordered.length; k++) {
    if (ordered[k].frame.time === ordered[k - 1].frame.time) {
      const [a, b] = [ordered[k - 1].file, ordered[k].file].sort();
      throw new InputError(b, 'time', `${new Date(ordered[k].frame.time).toISOString()} is also the time of ${a}: give each frame once`);
    }
  }
  return ordered;
}

export async function rateCommand(args: ParsedArgs, out: NodeJS.WritableStream): Promise<number> {
  const files = args.positional;
  if (files.length < 1) throw new Error('give one frame file, or a sequence of frames (FRAME FRAME ...)');
  const frames = await framesInTimeOrder(files);
  const { file, frame } = frames[frames.length - 1];
  const labelsOption = stringFlag(args, 'labels') ?? (frames.length === 1 && frame.labels ? 'from-file' : 'detect');
  const settings = settingsFrom(args);

  if (labelsOption !== 'detect') {
    // Labels given (in the frame, or a file) or none: one frame that carries its velocity.
    if (frames.length > 1) throw new Error('--labels from-file, none or FILE take one frame that carries its velocity; a sequence of frames needs --labels detect');
    const labels = labelsOption === 'none' ? null
      : labelsOption === 'from-file' ? frame.labels ?? null
        : await labelsFromFile(frame, labelsOption, file);
    const r = rateSample({ frame, labels, ...(settings.noiseG !== undefined && { noiseG: settings.noiseG }) });
    const result = { ...sampleJson(r.sample), sample_frames: [file] } as Record<string, unknown>;
    if (args.flags.footpoints && r.split) {
      const k = r.split.ids.length;
      result.footpoints = r.split.ids.map((id, a) => ({ id, spin: r.split!.spin[a] }));
      result.pair_ids = r.split.ids;
      result.orbit_matrix = Array.from({ length: k }, (_, a) => Array.from(r.split!.orbit.subarray(a * k, (a + 1) * k)));
    }
    out.write(JSON.stringify(result, null, 2) + '\n');
    return 0;
  }

  // Footpoints detected and tracked through the sequence; the last frame's velocity, or the one
  // inferred between it and the frame before.
  const cache: FluxKernelCache = new Map();
  let state: AnalysisState = {};
  let analysis: FrameAnalysis | undefined;
  const withOwnVelocity: string[] = [];
  for (const f of frames) {
    analysis = analyseFrame(f.frame, state, settings, cache);
    state = analysis.state;
    if (analysis.sample && hasVelocity(f.frame)) withOwnVelocity.push(f.file);
  }
  if (!analysis?.sample) {
    const next = frames.length === 1 ? 'give the next frame as a second file' : 'give a frame close enough before it';
    throw new InputError(file, 'vx/vy', `${analysis?.waiting}; ${next}`);
  }
  const sampleFrames = hasVelocity(frame) ? [file] : [frames[frames.length - 2].file, file];
  const result: Record<string, unknown> = { ...sampleJson(analysis.sample), sample_frames: sampleFrames };
  const notes = [...analysis.velocityNotes];
  if (hasVelocity(frame) && withOwnVelocity.length > 1) {
    notes.push(`${withOwnVelocity.length} of the frames carry their velocity and each gives a sample: this is the last one's (${file}); the others served the footpoint tracking.`);
  }
  if (notes.length > 0) result.velocity_notes = notes;
  if (analysis.footpoints) {
    result.spin_point = analysis.footpoints.point.spin;
    result.orbit_point = analysis.footpoints.point.orbit;
    result.footpoint_count = analysis.footpoints.footpoints.length;
    if (args.flags.footpoints) result.footpoints = footpointReport(analysis.footpoints, true);
  }
  out.write(JSON.stringify(result, null, 2) + '\n');
  return 0;
}
