/**
 * The progress bar of the long commands (window, tolerance): on standard error, only when it
 * is a terminal, gone when the work ends. Exports `progressBar`.
 */
import cliProgress from 'cli-progress';

export interface Progress {
  /** What the analysis calls as work gets done (undefined when no bar is shown). */
  onProgress: ((done: number, total: number) => void) | undefined;
  stop: () => void;
}

/** `unit` names what is counted: "solves", "points". */
export function progressBar(label: string, unit: string): Progress {
  if (!process.stderr.isTTY) return { onProgress: undefined, stop: () => {} };
  const bar = new cliProgress.SingleBar(
    { stream: process.stderr, format: `${label} |{bar}| {value}/{total} ${unit}, {eta_formatted} left`, hideCursor: true, clearOnComplete: true },
    cliProgress.Presets.shades_classic,
  );
  let started = false;
  return {
    onProgress: (done, total) => {
      if (!started) bar.start(total, done);
      else bar.update(done);
      started = true;
    },
    stop: () => {
      if (started) bar.stop();
    },
  };
}
