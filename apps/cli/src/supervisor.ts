import type { ChildProcess } from 'node:child_process';
import { renameSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';

/** One process the launcher keeps running. */
export interface Supervised {
  name: string;
  /** Starts (or starts again) the process; resolves once it runs. */
  start(): Promise<ChildProcess>;
}

export interface SupervisorOptions {
  /** More deaths than this within {@link windowMs}, of any one process, and the launcher gives up. */
  restartLimit: number;
  windowMs: number;
  /** Where the state file (`launcher.json`: pids and restart counts) is written. */
  dataDir: string;
  log: (line: string) => void;
  /** First wait before a restart; it doubles with each death in the window, up to {@link maxBackoffMs}. */
  backoffMs?: number;
  maxBackoffMs?: number;
  /** How long the processes get to stop on SIGTERM before they are killed. */
  stopGraceMs?: number;
}

interface Slot {
  spec: Supervised;
  child: ChildProcess | null;
  deaths: number[];
  restarts: number;
  timer: NodeJS.Timeout | null;
}

/** True once a child has exited, by a code or a signal (a signal-killed child has `exitCode` null). */
export function hasExited(child: ChildProcess): boolean {
  return child.exitCode !== null || child.signalCode !== null;
}

/** Resolves when the child has exited; at once if it already has (its `exit` event is then gone). */
export function whenExited(child: ChildProcess): Promise<void> {
  return hasExited(child) ? Promise.resolve() : new Promise((r) => child.once('exit', () => r()));
}

/**
 * Keeps the service's processes running: restarts one that dies (a crash, kill -9, the out-of-memory killer) after
 * a back-off, counts the restarts (log lines and `DATA_DIR/launcher.json`, which the API's metrics may read), and
 * when one process dies more than `restartLimit` times within the window, stops everything and ends with a non-zero
 * code, so that systemd or a container runtime sees the failure. SIGINT and SIGTERM always end it: the processes get
 * `stopGraceMs` to stop, then are killed; a second signal kills them at once.
 */
export class Supervisor {
  private readonly slots: Slot[] = [];
  private stopping: Promise<number> | null = null;
  private readonly startedAt = new Date();

  constructor(private readonly options: SupervisorOptions) {}

  /** Starts every process, in order. */
  async run(specs: Supervised[]): Promise<void> {
    for (const spec of specs) {
      const slot: Slot = { spec, child: null, deaths: [], restarts: 0, timer: null };
      this.slots.push(slot);
      await this.launch(slot);
    }
    this.writeState();
  }

  /** Stops every process; resolves with `code` once all have exited. */
  stop(code: number): Promise<number> {
    this.stopping ??= (async () => {
      for (const s of this.slots) if (s.timer) clearTimeout(s.timer);
      const alive = (slots: Slot[]) => slots.flatMap((s) => (s.child && !hasExited(s.child) ? [s.child] : []));
      const running = alive(this.slots);
      const grace = setTimeout(() => {
        for (const c of running) if (!hasExited(c)) c.kill('SIGKILL');
      }, this.options.stopGraceMs ?? 10_000);
      // The first process (the private Redis, when there is one) last: the others may still write to it as they stop.
      for (const group of [alive(this.slots.slice(1)), alive(this.slots.slice(0, 1))]) {
        for (const c of group) c.kill('SIGTERM');
        await Promise.all(group.map(whenExited));
      }
      clearTimeout(grace);
      return code;
    })();
    return this.stopping;
  }

  /** Kills every process at once (a second signal while stopping). */
  kill(): void {
    for (const s of this.slots) if (s.child && !hasExited(s.child)) s.child.kill('SIGKILL');
  }

  /** Resolves with the exit code once the launcher has given up or been stopped. */
  readonly done: Promise<number> = new Promise((resolve) => {
    this.finish = resolve;
  });
  private finish!: (code: number) => void;

  private async launch(slot: Slot): Promise<void> {
    const child = await slot.spec.start();
    slot.child = child;
    child.once('exit', (code, signal) => this.died(slot, child, code, signal));
    if (hasExited(child)) this.died(slot, child, child.exitCode, child.signalCode);
  }

  private died(slot: Slot, child: ChildProcess, code: number | null, signal: NodeJS.Signals | null): void {
    if (this.stopping || slot.child !== child) return;
    slot.child = null;
    const now = Date.now();
    slot.deaths = [...slot.deaths.filter((t) => now - t < this.options.windowMs), now];
    const how = signal ? `killed by ${signal}` : `exited with code ${code}`;
    if (slot.deaths.length > this.options.restartLimit) {
      this.options.log(
        `${slot.spec.name} ${how}: ${slot.deaths.length} deaths within ${Math.round(this.options.windowMs / 60_000)} min, more than ${this.options.restartLimit}; stopping everything`,
      );
      void this.stop(1).then((c) => this.finish(c));
      return;
    }
    const backoff = Math.min(
      this.options.maxBackoffMs ?? 30_000,
      (this.options.backoffMs ?? 500) * 2 ** (slot.deaths.length - 1),
    );
    this.options.log(`${slot.spec.name} ${how}; restarting it in ${backoff} ms (restart ${slot.restarts + 1})`);
    slot.timer = setTimeout(() => {
      slot.timer = null;
      if (this.stopping) return;
      slot.restarts++;
      this.launch(slot).then(
        () => this.writeState(),
        (e: unknown) => {
          this.options.log(`${slot.spec.name} could not be restarted: ${(e as Error).message}; stopping everything`);
          void this.stop(1).then((c) => this.finish(c));
        },
      );
    }, backoff);
    this.writeState();
  }

  /** Ends the launcher from a signal: stop, and exit 0 (a second signal kills at once). */
  signal(): void {
    if (this.stopping) {
      this.kill();
      return;
    }
    void this.stop(0).then((c) => this.finish(c));
  }

  /** The processes, their pids and restart counts, written atomically for operators and the API's metrics. */
  private writeState(): void {
    const state = {
      startedAt: this.startedAt.toISOString(),
      updatedAt: new Date().toISOString(),
      launcherPid: process.pid,
      processes: Object.fromEntries(
        this.slots.map((s) => [s.spec.name, { pid: s.child?.pid ?? null, restarts: s.restarts }]),
      ),
      restarts: this.slots.reduce((n, s) => n + s.restarts, 0),
    };
    const file = join(this.options.dataDir, 'launcher.json');
    try {
      writeFileSync(`${file}.tmp`, `${JSON.stringify(state, null, 2)}\n`);
      renameSync(`${file}.tmp`, file);
    } catch (e) {
      this.options.log(`could not write ${file}: ${(e as Error).message}`);
    }
  }
}
