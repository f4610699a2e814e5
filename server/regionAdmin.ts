// Managing regions (docs/api.md): remove one with its files, give it another name, reset its grid.
// Each checks the request first (a refusal changes nothing), then waits until the region is still
// (pipeline.exclusive: nothing of it is being stored or computed, arrivals wait), checks again,
// changes the rows in one transaction that also records the file work, and does the file work
// (server/regionFiles.ts; a crash in between is finished at the next start). The watched folders
// of the names involved are put on hold meanwhile, so that no file is taken from a folder being
// moved or removed.
import { InputError } from '../core/inputError.js';
import { isDiskFull } from './diskFull.js';
import type { FolderWatch } from './folderWatch.js';
import type { Pipeline } from './pipeline.js';
import { finishChore } from './regionFiles.js';
import { checkRegionName } from './regionName.js';
import type { ReplayRegistry } from './replayRegistry.js';
import type { Store } from './store.js';
import type { StoreWriter } from './storeWriter.js';
import type { ViewerHub } from './viewerHub.js';

export interface RegionAdminContext {
  readonly store: Store;
  readonly writer: StoreWriter;
  readonly pipeline: Pipeline;
  readonly folders: FolderWatch;
  readonly feeds: ReplayRegistry;
  readonly hub: ViewerHub;
  readonly log: (line: string) => void;
}

export type AdminAnswer = { readonly status: number; readonly body: unknown };

/** Close codes of a viewer socket whose region went away. */
export const VIEWER_CLOSED_REMOVED = 4004;
export const VIEWER_CLOSED_RENAMED = 4005;

/** A refusal: nothing stored was changed. */
class Refusal extends Error {
  constructor(readonly status: number, readonly field: string, readonly problem: string) {
    super(problem);
  }
}

const SOURCE = 'request';

function refused(e: unknown): AdminAnswer {
  if (e instanceof Refusal) return { status: e.status, body: { error: e.problem, field: e.field, problem: e.problem } };
  if (e instanceof InputError) return { status: 400, body: { error: e.message, field: e.field, problem: e.problem } };
  if (isDiskFull(e)) return { status: 507, body: { error: 'the monitor\'s disk is full: nothing was changed; try again later', field: '(disk)', problem: 'no space left' } };
  throw e;
}

/** The body's fields, each known (a JSON object; an unknown key is refused naming it). */
function fieldsOf(body: unknown, known: readonly string[], what: string): Record<string, unknown> {
  if (body === undefined || body === null || (typeof body === 'object' && !Array.isArray(body) && Object.keys(body).length === 0)) return {};
  if (typeof body !== 'object' || Array.isArray(body)) throw new InputError(SOURCE, '(body)', `must be a JSON object (${what})`);
  for (const k of Object.keys(body)) if (!known.includes(k)) throw new InputError(SOURCE, k, `is not a field here (${what})`);
  return body as Record<string, unknown>;
}

export class RegionAdmin {
  constructor(private readonly ctx: RegionAdminContext) {}

  private mustExist(name: string): void {
    if (!this.ctx.store.region(name)) throw new Refusal(404, 'region', `no region named "${name}"`);
  }

  private notReplayed(name: string, allowInto: boolean): void {
    const busy = this.ctx.feeds.busyWith(name);
    if (busy && !(allowInto && busy.into)) throw new Refusal(409, 'region', `${busy.what}: wait until it is done`);
  }

  /**
   * `DELETE /api/regions/:region`: the region, its frames, samples, alerts, refusals, settings and
   * files (frames, maps, its inbox folder with what is in it) go. A replay into it is stopped
   * first; a replay that reads from it refuses the removal. Viewers are closed (4004).
   */
  async remove(name: string): Promise<AdminAnswer> {
    const { store, writer, pipeline, folders, feeds, hub, log } = this.ctx;
    try {
      this.mustExist(name);
      this.notReplayed(name, true);
      await feeds.end(name);
      await folders.hold([name]);
      try {
        return await pipeline.exclusive([name], async () => {
          this.mustExist(name);
          this.notReplayed(name, true);
          const r = await writer.call('removeRegion', name);
          pipeline.regionRemoved(name);
          hub.closeRegion(name, VIEWER_CLOSED_REMOVED, 'region removed');
          const files = await finishChore(store, writer, { id: r.chore, kind: 'remove', name, target: null }, log);
          log(`region ${name} removed: ${r.frames} frame(s), ${r.samples} sample(s), ${r.refusals} refusal(s)${files ? ' and its files' : ' (some files are left for the next start)'}`);
          return { status: 200, body: { region: name, removed: { frames: r.frames, samples: r.samples, refusals: r.refusals, files: files ? 'removed' : 'left for the next start' } } };
        });
      } finally {
        folders.release([name]);
      }
    } catch (e) {
      return refused(e);
    }
  }

  /**
   * `POST /api/regions/:region/rename { "to": NAME }`: everything of the region goes on under
   * the new name (frames, samples, alerts, refusals, settings, files, the inbox folder). A name
   * in use (a region, or a folder under the inbox) is refused. Viewers are closed (4005).
   */
  async rename(name: string, body: unknown): Promise<AdminAnswer> {
    const { store, writer, pipeline, folders, feeds, hub, log } = this.ctx;
    try {
      const b = fieldsOf(body, ['to'], 'a rename takes { "to": NEW_NAME }');
      if (b.to === undefined) throw new InputError(SOURCE, 'to', 'is missing: the new name of the region');
      let to: string;
      try { to = checkRegionName(b.to, SOURCE); } catch (e) { throw new InputError(SOURCE, 'to', (e as InputError).problem); }
      this.mustExist(name);
      if (to === name) throw new InputError(SOURCE, 'to', `is the region's name already ("${name}")`);
      const inUse = () => {
        if (store.region(to)) throw new Refusal(409, 'to', `a region named "${to}" exists already; pick another name (or remove that region first)`);
        if (folders.folderExists(to)) throw new Refusal(409, 'to', `the inbox has a folder "${to}" already (it becomes a region of that name); pick another name`);
      };
      inUse();
      this.notReplayed(name, false);
      this.notReplayed(to, false);
      if (feeds.status(name)) await feeds.end(name); // a replay that is done: it would feed the old name again
      await folders.hold([name, to]);
      try {
        return await pipeline.exclusive([name, to], async () => {
          this.mustExist(name);
          inUse();
          this.notReplayed(name, false);
          let r;
          try {
            r = await writer.call('renameRegion', name, to);
          } catch (e) {
            if (/UNIQUE constraint/i.test(String((e as Error).message))) throw new Refusal(409, 'to', `a region named "${to}" exists already; pick another name`);
            throw e;
          }
          pipeline.regionRenamed(name, to);
          hub.closeRegion(name, VIEWER_CLOSED_RENAMED, `region renamed to ${to}`);
          const files = await finishChore(store, writer, { id: r.chore, kind: 'rename', name, target: to }, log);
          log(`region ${name} renamed to ${to}${files ? '' : ' (some files are left to move at the next start)'}`);
          return { status: 200, body: { region: to, renamed_from: name } };
        });
      } finally {
        folders.release([name, to]);
      }
    } catch (e) {
      return refused(e);
    }
  }

  /**
   * `POST /api/regions/:region/reset { "remove_frames": true }`: the region's grid is the grid
   * of its stored frames, so a new grid needs them gone. Its frames, their samples and maps, the
   * budget and the alerts go; its settings, refusals, the record of removed frames and of the
   * watched files already taken stay. Without `remove_frames: true` a region that holds frames is
   * refused (409) with their count and grid; one without frames has no grid to reset (200).
   */
  async reset(name: string, body: unknown): Promise<AdminAnswer> {
    const { store, writer, pipeline, log } = this.ctx;
    try {
      const b = fieldsOf(body, ['remove_frames'], 'a reset takes { "remove_frames": true }');
      if (b.remove_frames !== undefined && typeof b.remove_frames !== 'boolean') throw new InputError(SOURCE, 'remove_frames', 'must be true or false');
      const confirm = b.remove_frames === true;
      this.mustExist(name);
      const mayGo = () => {
        const n = store.frameCount(name);
        const f = store.firstFrame(name);
        if (n > 0 && !confirm && f) {
          throw new Refusal(409, 'remove_frames', `region ${name} holds ${n} frame(s) of ${f.nx}x${f.ny} pixels of ${f.dx}x${f.dy} Mm; its grid is theirs, so resetting it removes them with their samples, maps and alerts: send { "remove_frames": true } to do so`);
        }
        return f && { nx: f.nx, ny: f.ny, dx: f.dx, dy: f.dy };
      };
      mayGo();
      this.notReplayed(name, false);
      return await pipeline.exclusive([name], async () => {
        this.mustExist(name);
        this.notReplayed(name, false);
        const grid = mayGo() ?? null;
        if (!grid) return { status: 200, body: { region: name, reset: { frames_removed: 0, samples_removed: 0, grid_was: null } } };
        const carry = pipeline.resetAccumulation(name);
        const r = await writer.call('resetRegion', name, carry);
        pipeline.regionReset(name, carry);
        const files = await finishChore(store, writer, { id: r.chore, kind: 'reset', name, target: null }, log);
        log(`region ${name} reset: ${r.frames} frame(s) of ${grid.nx}x${grid.ny} removed with ${r.samples} sample(s)${files ? '' : ' (some files are left for the next start)'}; its next frame sets its grid`);
        return { status: 200, body: { region: name, reset: { frames_removed: r.frames, samples_removed: r.samples, grid_was: grid } } };
      });
    } catch (e) {
      return refused(e);
    }
  }
}
