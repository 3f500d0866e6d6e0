// A Starveil server in a child process of its own (benchmarks measure it from outside; tests kill
// and restart it), and a small cookie-keeping HTTP client. No test framework here: bench/ runs alone.
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import net from 'node:net';
import path from 'node:path';

export interface ServerProcess {
  base: string;
  child: ChildProcess;
  /** resident set size of the server process, MB (from /proc) */
  rssMb: () => number;
  /** highest RSS sampled every 100 ms since start, MB */
  peakRssMb: () => number;
  /** the last 20,000 characters the server wrote (stdout and stderr) */
  log: () => string;
  stop: () => Promise<void>;
}

export async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = net.createServer();
    s.listen(0, () => {
      const p = (s.address() as net.AddressInfo).port;
      s.close(() => resolve(p));
    });
    s.on('error', reject);
  });
}

function rssOf(pid: number): number {
  try {
    const status = fs.readFileSync(`/proc/${pid}/status`, 'utf8');
    const m = /VmRSS:\s+(\d+) kB/.exec(status);
    return m ? Number(m[1]) / 1024 : 0;
  } catch {
    return 0;
  }
}

/** The benchmarks' server: development mode, uploads up to 2 GiB, sign-ins not rate-limited in practice. */
export function startServer(dataDir: string, env: Record<string, string> = {}): Promise<ServerProcess> {
  return spawnServer({ dataDir, env: { NODE_ENV: 'development', UPLOAD_MAX_BYTES: String(2 ** 31), LOGIN_RATE_MAX: '1000', ...env } });
}

/**
 * `tsx server/index.ts` on `port` (default: a free one) with its data in `dataDir` and no built
 * client, once /health answers (at most 180 s); `env` is added to this process's environment.
 */
export async function spawnServer({ dataDir, env = {}, port }: { dataDir: string; env?: Record<string, string>; port?: number }): Promise<ServerProcess> {
  port ??= await freePort();
  const base = `http://127.0.0.1:${port}`;
  const child = spawn(process.execPath, ['--import', 'tsx', path.resolve('server/index.ts')], {
    env: { ...process.env, PORT: String(port), STARVEIL_DATA_DIR: dataDir, STARVEIL_DIST: path.join(dataDir, 'no-dist'), PUBLIC_URL: base, ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let log = '';
  child.stdout!.on('data', (d) => (log = (log + d).slice(-20000)));
  child.stderr!.on('data', (d) => (log = (log + d).slice(-20000)));
  // a process ended by a signal keeps exitCode null: it has a signalCode instead
  const ended = () => child.exitCode !== null || child.signalCode !== null;
  let peak = 0;
  const sampler = setInterval(() => (peak = Math.max(peak, rssOf(child.pid!))), 100);
  sampler.unref();
  const end = Date.now() + 180_000;
  for (;;) {
    if (ended()) throw new Error(`the server exited (${child.exitCode ?? child.signalCode}):\n${log}`);
    try {
      if ((await fetch(`${base}/api/v1/health`)).ok) break;
    } catch {
      /* not listening yet */
    }
    if (Date.now() > end) throw new Error(`the server did not start:\n${log}`);
    await new Promise((r) => setTimeout(r, 200));
  }
  return {
    base,
    child,
    rssMb: () => rssOf(child.pid!),
    peakRssMb: () => peak,
    log: () => log,
    stop: async () => {
      clearInterval(sampler);
      if (!ended()) {
        child.kill('SIGTERM');
        await new Promise((r) => child.once('exit', r));
      }
    },
  };
}

/** A signed-in client: keeps the session cookie, sends the Origin header cookie writes need. */
export async function client(base: string, email: string, password: string) {
  const res = await fetch(`${base}/api/v1/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json', origin: base }, body: JSON.stringify({ email, password }) });
  if (res.status !== 200) throw new Error(`sign-in as ${email}: ${res.status} ${await res.text()}`);
  const cookie = res.headers.get('set-cookie')!.split(';')[0];
  return (p: string, init: RequestInit = {}) => fetch(`${base}/api/v1${p}`, { ...init, headers: { ...(init.headers as Record<string, string> | undefined), cookie, origin: base } });
}

export function quantile(sorted: number[], q: number): number {
  if (!sorted.length) return NaN;
  return sorted[Math.min(sorted.length - 1, Math.max(0, Math.ceil(q * sorted.length) - 1))];
}
