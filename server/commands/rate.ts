// `helicord rate FRAME [FRAME ...]`: the injection rate of a frame, or of the last pair of a
// sequence of frames, as one JSON object. The frames go through the pipeline's per-frame step in
// time order with its state carried from one to the next, as the monitor does: footpoints are
// tracked through all of them, and with frames that carry no velocity the footpoint motions of the
// last pair are measured over the motion baseline when earlier frames reach back that far. A frame
// that carries its velocity gives a sample of its own: the last frame's sample is the one printed,
// `sample_frames` says which frames it came from, and the earlier frames' own samples are listed
// in `other_samples`. FITS archives with one file per component are read with the component
// options or a config file's `components`.
import type { FluxKernelCache } from '../../core/fluxKernel.js';
import type { Frame } from '../../core/frame.js';
import type { AnalysisSettings, AnalysisState, FrameAnalysis } from '../../core/frameAnalysis.js';
import { analyseFrame } from '../../core/frameAnalysis.js';
import { hasVelocity } from '../../core/frame.js';
import type { FrameAssemblySettings } from '../../core/frameAssembly/assembleFrame.js';
import { mergeAssemblySettings, readsComponentFiles } from '../../core/frameAssembly/componentLayouts.js';
import type { PatchCentre } from '../../core/frameAssembly/wcs.js';
import { framePatchCentre, meanCentre } from '../../core/frameAssembly/wcs.js';
import type { FootpointReport } from '../../core/footpoints/footpointReport.js';
import { footpointReport } from '../../core/footpoints/footpointReport.js';
import { sampleColumns } from '../../core/seriesColumns.js';
import { footpointsForWire } from '../../core/wire/footpointWire.js';
import { InputError } from '../../core/inputError.js';
import type { BraidReport } from '../../core/braid/braidTracker.js';
import { braidStep, emptyBraidState } from '../../core/braid/braidTracker.js';
import { braidInputFromFootpoints } from '../../core/braid/braidInput.js';
import { braidReportJson } from '../../core/braid/braidColumns.js';
import type { RateSample } from '../../core/rateSample.js';
import { measureRate } from '../../core/measureRate.js';
import type { VelocityMethod } from '../../core/velocity/velocitySettings.js';
import { DEFAULT_VELOCITY_SETTINGS } from '../../core/velocity/velocitySettings.js';
import { readBatchConfig } from '../../replay/batchConfig.js';
import { readJsonFile } from '../../replay/fileProblem.js';
import { loadFrameFile, loadFrameFileSet } from '../../replay/frameFiles.js';
import type { CommandSpec, ParsedArgs } from './args.js';
import { COMPONENT_OPTIONS, componentSettingsFrom } from './componentOptions.js';

export const RATE_SPEC: CommandSpec = {
  name: 'rate',
  usage: ['rate FRAME [FRAME ...] [options]'],
  summary: 'the injection rate of one frame, a pair or a sequence, printed as JSON',
  description: 'Helicity injection rate printed as JSON (Mx^2/s) in the series\' own columns: rate_total, rate_total_ga, rate_spin, rate_orbit, '
    + 'rate_background, sigma_rate_total, and rate_emergence, rate_shear with vector data, with the unsigned flux flux_unsigned (Mx) and, when the headers give them, the patch centre. One frame must carry its '
    + 'velocity; with frames that carry none, the velocity is inferred between the last two and the rate is at their mid-time. '
    + 'A sequence (any number of frames, taken in time order) is tracked through: footpoint ids and windings follow, footpoint '
    + 'motions are measured over the 720 s motion baseline; the last frame\'s sample is printed, sample_frames names its frames, '
    + 'and frames that carry their own velocity give their samples in other_samples. Footpoints are detected and tracked unless '
    + 'the frame has labels (--labels from-file) or --labels none. FRAME is a JSON frame, a FITS frame file, or, with a layout of '
    + 'one file per component, every component file of every time (see README and docs/fits.md).',
  positionals: { min: 1, max: Infinity, what: 'a frame file, or a sequence of frames (FRAME FRAME ...)' },
  options: {
    labels: {
      kind: 'string', value: 'WHICH', defaultText: 'detect (from-file for one frame that carries labels)',
      help: 'footpoint labels: detect (segment and track), from-file (the frame\'s own labels), none, or FILE.json (a list of nx*ny integers)',
    },
    footpoints: { kind: 'boolean', help: 'add the footpoint table, events and pair matrices' },
    method: { kind: 'string', value: 'NAME', choices: ['auto', 'dave', 'dave4vm', 'lct'], defaultText: 'auto: dave4vm when both frames carry bx, by, else dave', help: 'velocity inference between frames that carry none' },
    window: { kind: 'number', value: 'SIGMA_PX', min: 1, max: 64, defaultText: String(DEFAULT_VELOCITY_SETTINGS.sigma), help: 'Gaussian window width of the velocity inference, pixels' },
    noise: { kind: 'number', value: 'G', above: 0, defaultText: 'estimated from each frame', help: 'noise of bn, gauss' },
    'max-interval': { kind: 'number', value: 'S', above: 0, defaultText: String(DEFAULT_VELOCITY_SETTINGS.maxIntervalS), help: 'frames further apart than this many seconds are not paired for a velocity' },
    config: { kind: 'string', value: 'FILE', help: 'a config file (README): its analysis and components apply (the options above win); budget and rules do not apply to one rate' },
    ...COMPONENT_OPTIONS,
  },
};

async function labelsFromFile(frame: Frame, path: string, source: string): Promise<Int32Array> {
  const json = await readJsonFile(path, '(labels file)');
  const arr = Array.isArray(json) ? json : (json as { labels?: unknown }).labels;
  if (!Array.isArray(arr) || arr.length !== frame.nx * frame.ny || !arr.every((v) => Number.isInteger(v) && v >= 0)) {
    throw new InputError(path, 'labels', `must be ${frame.nx * frame.ny} non-negative integers to match ${source}`);
  }
  return Int32Array.from(arr as number[]);
}

/** The config file's analysis settings with the options laid over them. */
function settingsFrom(args: ParsedArgs, base: AnalysisSettings): AnalysisSettings {
  const method = args.string('method') as VelocityMethod | 'auto' | undefined;
  const sigma = args.number('window');
  const noiseG = args.number('noise');
  const maxIntervalS = args.number('max-interval');
  const velocity = {
    ...base.velocity,
    ...(method !== undefined && { method }), ...(sigma !== undefined && { sigma }), ...(maxIntervalS !== undefined && { maxIntervalS }),
  };
  return {
    ...base,
    ...(noiseG !== undefined && { noiseG }),
    ...(Object.keys(velocity).length > 0 && { velocity }),
    ...(noiseG !== undefined && base.footpoints !== false && { footpoints: { ...base.footpoints, noise: noiseG } }),
  };
}

/** One sample as JSON: the series' own columns (core/seriesColumns.ts sampleColumns), one spelling everywhere. */
function sampleJson(s: RateSample, centre?: PatchCentre): Record<string, unknown> {
  return { ...sampleColumns(s, centre), unit: 'Mx^2/s' };
}

/** The footpoints of the analysis in the wire's shape (core/wire/footpointWire.ts) and the orbit matrix of the split. */
function footpointsJson(report: FootpointReport): Record<string, unknown> {
  const m = report.pairMatrix;
  return {
    footpoints: footpointsForWire(report),
    pair_ids: m?.ids ?? [],
    orbit_matrix: m ? m.orbitExact ?? m.orbitPoint : [],
  };
}

/** The frames of the command line in time order; a time given twice is refused, naming both files. */
async function framesInTimeOrder(files: readonly string[], components: FrameAssemblySettings): Promise<{ file: string; frame: Frame }[]> {
  let loaded: { file: string; frame: Frame }[];
  if (readsComponentFiles(components)) {
    // One file per component: the files are grouped by time, each frame named by its bn file.
    loaded = (await loadFrameFileSet(files, components)).map((frame) => ({ file: frame.provenance?.source ?? '?', frame }));
  } else {
    loaded = await Promise.all(files.map(async (file) => ({ file, frame: await loadFrameFile(file, components) })));
  }
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
  const config = await readBatchConfig(args.string('config'));
  const components = mergeAssemblySettings(config.components, componentSettingsFrom(args));
  const frames = await framesInTimeOrder(args.positional, components);
  const { file, frame } = frames[frames.length - 1];
  const labelsOption = args.string('labels') ?? (frames.length === 1 && frame.labels ? 'from-file' : 'detect');
  const settings = settingsFrom(args, config.analysis);

  if (labelsOption !== 'detect') {
    // Labels given (in the frame, or a file) or none: one frame that carries its velocity.
    if (frames.length > 1) throw new Error('--labels from-file, none or FILE take one frame that carries its velocity; a sequence of frames needs --labels detect');
    const labels = labelsOption === 'none' ? null
      : labelsOption === 'from-file' ? frame.labels ?? null
        : await labelsFromFile(frame, labelsOption, file);
    const r = measureRate({ frame, labels, ...(settings.noiseG !== undefined && { noiseG: settings.noiseG }) });
    const result = { ...sampleJson(r.sample, framePatchCentre(frame)), sample_frames: [file] } as Record<string, unknown>;
    if (args.boolean('footpoints') && r.split) {
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
  const ownSamples: Record<string, unknown>[] = [];
  // The braid of the largest footpoints through the sequence (docs/braids.md).
  let braid = emptyBraidState();
  let braidReport: BraidReport | undefined;
  let centre: PatchCentre | undefined, before: PatchCentre | undefined;
  for (const f of frames) {
    analysis = analyseFrame(f.frame, state, settings, cache);
    state = analysis.state;
    if (analysis.footpoints) ({ state: braid, report: braidReport } = braidStep(braid, braidInputFromFootpoints(analysis.footpoints), config.braid));
    before = centre;
    centre = framePatchCentre(f.frame);
    if (analysis.sample && hasVelocity(f.frame) && f !== frames[frames.length - 1]) {
      ownSamples.push({ ...sampleJson(analysis.sample, centre), sample_frames: [f.file] });
    }
  }
  if (!analysis?.sample) {
    const next = frames.length === 1 ? 'give the next frame as a second file' : 'give a frame close enough before it';
    throw new InputError(file, 'vx/vy', `${analysis?.waiting}; ${next}`);
  }
  const pair = !hasVelocity(frame);
  const sampleFrames = pair ? [frames[frames.length - 2].file, file] : [file];
  const result: Record<string, unknown> = { ...sampleJson(analysis.sample, pair ? meanCentre(before, centre) : centre), sample_frames: sampleFrames };
  const notes = [...analysis.velocityNotes];
  if (ownSamples.length > 0) {
    notes.push(`${ownSamples.length + (pair ? 0 : 1)} of the frames carry their velocity and each gives a sample: the one above is ${pair ? 'the last pair\'s' : `the last frame's (${file})`}; the others are in other_samples.`);
    result.other_samples = ownSamples;
  }
  if (notes.length > 0) result.velocity_notes = notes;
  if (analysis.footpoints) {
    result.spin_point = analysis.footpoints.point.spin;
    result.orbit_point = analysis.footpoints.point.orbit;
    result.footpoint_count = analysis.footpoints.footpoints.length;
    if (args.boolean('footpoints')) Object.assign(result, footpointsJson(footpointReport(analysis.footpoints, true)));
  }
  if (braidReport) result.braid = braidReportJson(braidReport);
  out.write(JSON.stringify(result, null, 2) + '\n');
  return 0;
}
