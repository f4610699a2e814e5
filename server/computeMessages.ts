// Messages between the compute pool and its workers.
import type { RateSample } from '../core/rateSample.js';

/** What a compute worker is started with (its workerData). */
export interface WorkerSetup {
  /** Analyse a short synthetic sequence before the first request (server/analysisWarmUp.ts). */
  readonly warmUp?: boolean;
  /** Run each frame's independent parts on a second thread (server/frameAssistant.ts), the warm-up's too. */
  readonly assist?: boolean;
}

export interface WorkerRequest {
  readonly id: number;
  readonly region: string;
  /** Absolute path of the stored frame to analyse. */
  readonly framePath: string;
  /**
   * Rebuild the region's state first, or 'reset' to start empty: from the stored frames within
   * the motion baseline up to the frame processed before this one (absolute paths, oldest first)
   * and the analysis memory stored after that frame (core/analysisMemory.ts).
   */
  readonly prime?: { readonly frames: readonly string[]; readonly memory?: unknown } | 'reset';
  readonly settings: Record<string, unknown>;
  /** Where to write the result maps. */
  readonly mapsPath: string;
}

export type WorkerReply =
  | { readonly id: number; readonly ok: true; readonly sample?: RateSample; readonly waiting?: string; readonly mapsWritten: boolean; readonly footpoints?: unknown; readonly events?: unknown; readonly memory?: unknown }
  /** `diskFull`: the maps could not be written for lack of space (the frame waits, it is not at fault). */
  | { readonly id: number; readonly ok: false; readonly error: { source: string; field: string; problem: string; message: string; diskFull?: boolean } };

/** Sent once by a worker started with `warmUp` when its warm-up ends (id 0: it answers no request). */
export interface WarmUpNotice {
  readonly id: 0;
  /** Synthetic frames analysed, of how many the warm-up has, and its wall time. */
  readonly warmedUp: { readonly frames: number; readonly of: number; readonly ms: number };
}
