/**
 * Child processes of the queue benchmark: the API and the worker run as their
 * own processes, so the load generator never shares their event loop.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { createServer } from 'node:net';
import { setTimeout as sleep } from 'node:timers/promises';

/** A started service process and a way to stop it. */
export interface Service {
  readonly name: string;
  readonly child: ChildProcess;
  /** Resolves with the exit code (or signal) once the process has ended. */
  readonly exited: Promise<string>;
}

/** A TCP port on the loopback interface that nothing listens on right now. */
export async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const server = createServer();
    server.once('error', reject);
    server.listen(0, '127.0.0.1', () => {
      const address = server.address();
      const port = typeof address === 'object' && address ? address.port : 0;
      server.close(() => (port > 0 ? resolve(port) : reject(new Error('freePort: no port assigned'))));
    });
  });
}

/** Copies a child's output to our stderr, line by line with a prefix, so stdout stays one JSON document. */
function forward(stream: NodeJS.ReadableStream | null, prefix: string): void {
  if (!stream) return;
  let rest = '';
  stream.setEncoding('utf8');
  stream.on('data', (chunk: string) => {
    const lines = (rest + chunk).split('\n');
    rest = lines.pop() ?? '';
    for (const line of lines) if (line.trim() !== '') process.stderr.write(`[${prefix}] ${line}\n`);
  });
  stream.on('end', () => {
    if (rest.trim() !== '') process.stderr.write(`[${prefix}] ${rest}\n`);
  });
}

/** Starts `node <script>` with the given environment; its output goes to our stderr. */
export function startService(
  name: string,
  script: string,
  env: Record<string, string>,
  nodeArgs: string[] = [],
): Service {
  const child = spawn(process.execPath, [...nodeArgs, script], { env, stdio: ['ignore', 'pipe', 'pipe'] });
  forward(child.stdout, name);
  forward(child.stderr, name);
  const exited = new Promise<string>((resolve) => {
    child.once('exit', (code, signal) => resolve(signal ?? String(code)));
    child.once('error', (e) => resolve(`spawn error: ${e.message}`));
  });
  return { name, child, exited };
}

/** SIGTERM, then SIGKILL if the process has not ended within `graceMs`. */
export async function stopService(service: Service, graceMs = 10_000): Promise<void> {
  const { child } = service;
  if (child.exitCode !== null || child.signalCode !== null) return;
  child.kill('SIGTERM');
  const ended = await Promise.race([service.exited.then(() => true), sleep(graceMs).then(() => false)]);
  if (!ended) {
    process.stderr.write(`${service.name} did not stop within ${graceMs} ms; killing it\n`);
    child.kill('SIGKILL');
    await service.exited;
  }
}

/** Polls `GET /readyz` until it answers 200; fails when the process dies or `timeoutMs` passes. */
export async function waitReady(service: Service, baseUrl: string, timeoutMs = 60_000): Promise<void> {
  const deadline = performance.now() + timeoutMs;
  // Filled in by the callback when the process ends.
  const exit: { how: string | null } = { how: null };
  void service.exited.then((how) => (exit.how = how));
  while (performance.now() < deadline) {
    if (exit.how !== null) throw new Error(`${service.name} exited (${exit.how}) before it was ready`);
    try {
      const res = await fetch(`${baseUrl}/readyz`);
      await res.arrayBuffer();
      if (res.status === 200) return;
    } catch {
      // not listening yet
    }
    await sleep(200);
  }
  throw new Error(`${service.name} was not ready within ${timeoutMs} ms`);
}

/** Runs a CLI command to completion and returns its stdout; fails on a non-zero exit or after `timeoutMs`. */
export async function runCli(
  script: string,
  args: string[],
  env: Record<string, string>,
  timeoutMs = 60_000,
): Promise<string> {
  const child = spawn(process.execPath, [script, ...args], { env, stdio: ['ignore', 'pipe', 'pipe'] });
  let out = '';
  child.stdout.setEncoding('utf8');
  child.stdout.on('data', (c: string) => (out += c));
  forward(child.stderr, 'cli');
  const timer = setTimeout(() => child.kill('SIGKILL'), timeoutMs);
  try {
    const code = await new Promise<number | null>((resolve, reject) => {
      child.once('error', reject);
      child.once('close', (c) => resolve(c));
    });
    if (code !== 0) throw new Error(`cli ${args.join(' ')} exited with ${code}`);
    return out;
  } finally {
    clearTimeout(timer);
  }
}
