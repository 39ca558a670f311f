/**
 * Where the machine's CPU went during the measured window (Linux /proc): the
 * API process, this load generator, the PostgreSQL server processes, and
 * everything else (other work on the machine, which makes a run less
 * comparable with the next). Elsewhere the readings are null.
 */
import { readdirSync, readFileSync } from 'node:fs';

/** Clock ticks per second of /proc times; 100 on every mainstream Linux build. */
const TICKS_PER_SECOND = 100;

interface Reading {
  at: number;
  /** Busy and total CPU seconds summed over all cores since boot. */
  machine: { busy: number; total: number } | null;
  api: number | null;
  /** Every `postgres` process on the machine (this run's backends, and any other database's). */
  postgres: number | null;
  self: number;
}

function machineSeconds(): { busy: number; total: number } | null {
  try {
    const line = readFileSync('/proc/stat', 'utf8').split('\n', 1)[0];
    const f = line.trim().split(/\s+/).slice(1).map(Number);
    // user nice system idle iowait irq softirq steal …
    const idle = (f[3] ?? 0) + (f[4] ?? 0);
    const total = f.slice(0, 8).reduce((a, b) => a + b, 0);
    return { busy: (total - idle) / TICKS_PER_SECOND, total: total / TICKS_PER_SECOND };
  } catch {
    return null;
  }
}

function processSeconds(pid: number): number | null {
  try {
    const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
    // The command name may hold spaces; fields after it start at ')'.
    const f = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
    return (Number(f[11]) + Number(f[12])) / TICKS_PER_SECOND; // utime, stime
  } catch {
    return null;
  }
}

function postgresSeconds(): number | null {
  try {
    let sum = 0;
    for (const entry of readdirSync('/proc')) {
      if (!/^\d+$/.test(entry)) continue;
      try {
        if (readFileSync(`/proc/${entry}/comm`, 'utf8').trim() === 'postgres')
          sum += processSeconds(Number(entry)) ?? 0;
      } catch {
        // the process ended meanwhile
      }
    }
    return sum;
  } catch {
    return null;
  }
}

export function readCpu(apiPid: number | undefined): Reading {
  const u = process.cpuUsage();
  return {
    at: performance.now(),
    machine: machineSeconds(),
    api: apiPid === undefined ? null : processSeconds(apiPid),
    postgres: postgresSeconds(),
    self: (u.user + u.system) / 1e6,
  };
}

/** CPU use between two readings, in cores (1.0 = one core fully busy). */
export function cpuBetween(a: Reading, b: Reading) {
  const wall = (b.at - a.at) / 1000;
  const cores = (x: number | null) => (x === null ? null : Math.round((x / wall) * 100) / 100);
  const machine = a.machine && b.machine ? b.machine.busy - a.machine.busy : null;
  const api = a.api !== null && b.api !== null ? b.api - a.api : null;
  const self = b.self - a.self;
  // Backends that exit within the window drop out of the second reading; clamp at zero.
  const postgres = a.postgres !== null && b.postgres !== null ? Math.max(0, b.postgres - a.postgres) : null;
  return {
    machineBusyCores: cores(machine),
    apiCores: cores(api),
    loadGeneratorCores: cores(self),
    postgresServerCores: cores(postgres),
    otherCores: cores(machine !== null && api !== null ? Math.max(0, machine - api - self - (postgres ?? 0)) : null),
  };
}
