// What the merge checks before it puts task results together (pure):
// - one helicord version over all results, and each result made with its region's settings as
//   planned (a result from other settings or another version is refused, never mixed in);
// - the frames of a region's results: every frame of the region exactly once (a chunk reports only
//   its own frames, never its primer frames; a frame in two results would be counted twice);
// - the input files: a file read by two tasks (the primer frames of a chunk are the last frames of
//   the chunk before) had the same SHA-256 for both.

import type { CompleteResult, SurveyPlan, TaskProvenance } from './surveyFolder.js';

/** As much of a complete result as the checks over the whole survey need. */
export interface ResultStamp {
  readonly task: CompleteResult['task'];
  readonly provenance: Pick<TaskProvenance, 'version' | 'settingsDigest'>;
}

/** A reason to refuse the whole merge, or undefined. */
export function mixedResults(plan: SurveyPlan, results: readonly ResultStamp[]): string | undefined {
  const byVersion = new Map<string, number[]>();
  for (const r of results) byVersion.set(r.provenance.version, [...(byVersion.get(r.provenance.version) ?? []), r.task.id]);
  if (byVersion.size > 1) {
    return `the results were made by different helicord versions (${[...byVersion].map(([v, ids]) => `${v}: task(s) ${ids.join(', ')}`).join('; ')}); `
      + 'run the tasks of one version again (remove their results first)';
  }
  for (const r of results) {
    const region = plan.regions.find((g) => g.name === r.task.region);
    const planned = plan.tasks[r.task.id];
    if (!region || !planned || planned.region !== r.task.region || planned.start !== r.task.start || planned.end !== r.task.end || planned.primerFrom !== r.task.primerFrom) {
      return `the result of task ${r.task.id} (region ${r.task.region}, frames ${r.task.start}-${r.task.end - 1}) is not a task of this plan`;
    }
    if (r.provenance.settingsDigest !== region.settingsDigest) {
      return `the result of task ${r.task.id} (region ${r.task.region}) was made with other settings than the plan's (digest ${r.provenance.settingsDigest.slice(0, 12)}, planned ${region.settingsDigest.slice(0, 12)}); remove it and run the task again`;
    }
  }
  return undefined;
}

/** Why a region's complete results cannot be merged, or undefined (results in task order). */
export function regionCoverage(frameCount: number, results: readonly CompleteResult[]): string | undefined {
  const owner = new Array<number>(frameCount).fill(-1);
  for (const r of results) {
    for (const chunk of r.chunks) {
      for (const o of chunk.outcomes) {
        if (o.index < r.task.start || o.index >= r.task.end) return `task ${r.task.id} reports frame ${o.index}, outside its frames ${r.task.start}-${r.task.end - 1}`;
        if (owner[o.index] === r.task.id) return `frame ${o.index} (${o.file}) is reported twice by task ${r.task.id}`;
        if (owner[o.index] !== -1) return `frame ${o.index} (${o.file}) is in the results of tasks ${owner[o.index]} and ${r.task.id}`;
        owner[o.index] = r.task.id;
      }
    }
  }
  const missing = owner.indexOf(-1);
  return missing === -1 ? undefined : `frame ${missing} is in no task's result`;
}

/** A file hashed differently by two tasks (it changed while the survey ran), or undefined. */
export function changedInput(results: readonly CompleteResult[]): string | undefined {
  const seen = new Map<string, { sha256: string; task: number }>();
  for (const r of results) {
    for (const { file, sha256 } of r.provenance.inputs) {
      const before = seen.get(file);
      if (before && before.sha256 !== sha256) return `${file} changed between task ${before.task} and task ${r.task.id} (its SHA-256 differs); run both again`;
      if (!before) seen.set(file, { sha256, task: r.task.id });
    }
  }
  return undefined;
}
