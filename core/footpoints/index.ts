// The footpoint module's public face: find, track and spin footpoints (docs/footpoints.md).
export { analyseFootpoints, RECENT_FRAMES } from './analyseFootpoints.js';
export type {
  FootpointAnalysis, FootpointBudget, FootpointFlag, FootpointRow, FootpointSettings, FootpointState,
  PairRow, RotationNote, StoredFootpoint,
} from './analyseFootpoints.js';
export { connectedComponents } from './connectedComponents.js';
export type { Components, Connectivity } from './connectedComponents.js';
export { footpointMotion } from './footpointMotion.js';
export type { FootpointMotion } from './footpointMotion.js';
export { clippedMadOfUnitNormal, estimateNoiseLevel, MAD_TO_SIGMA } from '../noiseLevel.js';
export type { NoiseLevel, NoiseOptions } from '../noiseLevel.js';
export { angleStep, pairKey, separationAngle } from './pairWinding.js';
export type { PairWinding } from './pairWinding.js';
export { PATTERN_ROTATION_DEFAULTS, patternRotation } from './patternRotation.js';
export type { PatternFootprint, PatternNote, PatternRotation, PatternRotationOptions } from './patternRotation.js';
export { halfTurnAngle, regionProperties } from './regionProperties.js';
export type { Moments, RegionProperties } from './regionProperties.js';
export { NOISE_FLOOR_OF_PEAK, SEGMENTATION_DEFAULTS, segmentFootpoints } from './segmentation.js';
export type { Segmentation, SegmentationSettings } from './segmentation.js';
export { smoothMap } from './smoothing.js';
export { downhillTessellation } from './tessellation.js';
export { TRACKING_DEFAULTS, trackFootpoints } from './tracking.js';
export type { FootpointEvent, TrackAssignment, TrackedFootpoint, TrackingResult, TrackingSettings, TrackStatus } from './tracking.js';
export { footpointReport } from './footpointReport.js';
export type { FootpointReport } from './footpointReport.js';
