// Messages between a compute worker and its frame assistant (server/frameAssistant.ts).
import type { FrameTaskName } from '../core/frameTasks.js';

export interface AssistRequest {
  readonly id: number;
  readonly task: FrameTaskName;
  readonly args: unknown;
  /**
   * One Int32 shared with the compute worker: whoever changes it from 0 first runs the task (the
   * assistant writes 1, the compute worker 2 when it takes the task back to run it itself).
   */
  readonly claim: SharedArrayBuffer;
}

export type AssistReply =
  | { readonly id: number; readonly ok: true; readonly value: unknown }
  /** The compute worker had already taken the task back. */
  | { readonly id: number; readonly ok: true; readonly skipped: true }
  | { readonly id: number; readonly ok: false; readonly message: string };

export const CLAIMED_BY_ASSISTANT = 1;
export const TAKEN_BACK = 2;
