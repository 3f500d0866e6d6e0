/** Command-line numbers of the benchmarks: `--name value`, checked (a bad value stops the run, naming it). */
export function numberFlag(name: string, fallback: number): number {
  const i = process.argv.indexOf(`--${name}`);
  if (i < 0) return fallback;
  const v = Number(process.argv[i + 1]);
  if (!Number.isFinite(v) || v < 0) throw new Error(`--${name} ${process.argv[i + 1]}: expected a number ≥ 0`);
  return v;
}
