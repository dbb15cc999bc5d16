/** Milliseconds of a fixed integer loop: a gauge of the machine's speed at the moment (about 170 ms on a quiet minute of the reference machine). */
export function calibrationLoop(): number {
  const started = performance.now();
  let sum = 0;
  for (let i = 0; i < 300_000_000; i += 1) sum += i & 7;
  if (sum < 0) process.stdout.write('');
  return performance.now() - started;
}
