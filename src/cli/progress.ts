/** A progress line on stderr for long commands: only on a terminal, and only once a run has taken more than a second. */

export interface ProgressLine {
  /** Show `stage()` with the time so far; `stage` is called only when the line is shown (formatting a count loads locale data, about 20 ms). */
  update(stage: () => string): void;
  /** Clear the line, if one was shown. */
  done(): void;
}

/** A progress line headed `command` (e.g. `lagparity fit`). */
export function progressLine(command: string): ProgressLine {
  const started = performance.now();
  const tty = Boolean(process.stderr.isTTY);
  let shown = false;
  return {
    update(stage) {
      if (!tty) return;
      const elapsed = (performance.now() - started) / 1000;
      if (elapsed < 1) return;
      shown = true;
      process.stderr.write(`\r\u001b[2K${command}: ${stage()} (${elapsed.toFixed(1)} s)`);
    },
    done() {
      if (shown) process.stderr.write('\r\u001b[2K');
    },
  };
}
