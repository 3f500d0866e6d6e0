// `npm run dev`: the API (restarting on change) on API_PORT (default 3001) and the Vite dev server
// with hot reload on PORT (default 5173), which proxies /api to the API.
import { spawn } from 'node:child_process';

const apiPort = process.env.API_PORT ?? '3001';
const procs = [
  spawn('npx', ['tsx', 'watch', 'server/index.ts'], { stdio: 'inherit', env: { ...process.env, PORT: apiPort } }),
  spawn('npx', ['vite'], { stdio: 'inherit', env: { ...process.env, API_PORT: apiPort } }),
];
const stop = () => {
  for (const p of procs) p.kill('SIGTERM');
  process.exit(0);
};
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
for (const p of procs) p.on('exit', (code) => { if (code) stop(); });
