// The built-in demo region, streaming live: frames from the demo generator (replay/demo) go into
// the pipeline like any other source, one every `intervalMs / speed`. The frames are the same on
// every start (seeded), so after a restart the feed resumes where the stored frames end.
// The frames carry their imposed velocity and labels so that the rate is computed from the start.
import type { DemoRegion } from '../replay/demo/demoRegion.js';
import { demoRegion } from '../replay/demo/demoRegion.js';
import type { Pipeline } from './pipeline.js';
import type { Store } from './store.js';

export const DEMO_REGION = 'demo';

export interface DemoReplayStatus {
  readonly state: 'playing' | 'paused' | 'done';
  readonly speed: number;
  readonly position: number;
  readonly total: number;
}

export class DemoFeed {
  private readonly demo: DemoRegion;
  private position: number;
  private state: 'playing' | 'paused' | 'done' = 'playing';
  /** Frames per second = speed / intervalS; speed 0 = as fast as the pipeline takes them. */
  private speed = 1;
  private timer: NodeJS.Timeout | undefined;
  private stopped = false;

  constructor(private readonly pipeline: Pipeline, store: Store, private readonly intervalMs = 2000, private readonly log: (line: string) => void = () => undefined) {
    this.demo = demoRegion({ withVelocity: true, withLabels: true });
    this.position = store.region(DEMO_REGION) ? store.frameCount(DEMO_REGION) : 0;
    if (this.position >= this.demo.frameCount) this.state = 'done';
  }

  start(): void {
    this.log(`demo region "${DEMO_REGION}": ${this.demo.frameCount} frames of ${this.demo.grid.nx}x${this.demo.grid.ny}, from frame ${this.position}`);
    this.schedule();
  }

  private schedule(): void {
    if (this.stopped || this.state !== 'playing') return;
    const delay = this.speed === 0 ? 0 : this.intervalMs / this.speed;
    this.timer = setTimeout(() => void this.step(), delay);
  }

  private async step(): Promise<void> {
    if (this.stopped || this.state !== 'playing') return;
    if (this.position >= this.demo.frameCount) { this.state = 'done'; return; }
    const i = this.position++;
    const frame = this.demo.frameAt(i);
    const a = await this.pipeline.ingest({ region: DEMO_REGION, payload: { kind: 'frame', frame: { ...frame, provenance: { source: `demo frame ${i}` } } }, source: 'demo', mayCreate: true });
    if (a.status >= 500) this.log(`demo frame ${i}: ${JSON.stringify(a.body)}`);
    if (this.speed === 0) await this.pipeline.idle();
    if (this.position >= this.demo.frameCount) this.state = 'done';
    this.schedule();
  }

  status(): DemoReplayStatus {
    return { state: this.state, speed: this.speed, position: this.position, total: this.demo.frameCount };
  }

  /** The replay control of docs/api.md for the demo region. */
  control(body: unknown): { status: number; body: unknown } {
    const b = (body ?? {}) as { action?: unknown; value?: unknown };
    const bad = (problem: string, field = 'action') => ({ status: 400, body: { error: problem, field, problem } });
    switch (b.action) {
      case 'pause':
        if (this.state === 'playing') { this.state = 'paused'; clearTimeout(this.timer); }
        break;
      case 'resume':
        if (this.state === 'paused') { this.state = 'playing'; this.schedule(); }
        break;
      case 'speed': {
        const v = Number(b.value);
        if (!Number.isFinite(v) || v < 0) return bad('speed must be a factor >= 0 (0 = as fast as possible)', 'value');
        this.speed = v;
        if (this.state === 'playing') { clearTimeout(this.timer); this.schedule(); }
        break;
      }
      case 'seek':
        // Stored frames are part of the region's record; the live demo only moves forward.
        return { status: 409, body: { error: 'the live demo cannot seek: its frames are stored as they stream', field: 'action', problem: 'seek is for replays of archives' } };
      default:
        return bad(`action must be pause, resume, seek or speed, got ${JSON.stringify(b.action)}`);
    }
    return { status: 200, body: { replay: this.status() } };
  }

  stop(): void {
    this.stopped = true;
    clearTimeout(this.timer);
  }
}
