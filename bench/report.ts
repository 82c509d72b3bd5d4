/**
 * Shared pieces of the benchmarks: the `Row` every benchmark returns, a median timer with warm-up,
 * and the plain-text table that bench/run.ts prints. Knows nothing about what is being timed.
 */

/** One measured figure. `target`, when given, is an upper bound in the same unit. */
export interface Row {
  name: string;
  value: number;
  unit: string;
  target?: number;
}

export interface TimingOptions {
  /** Calls made before timing starts, so the JIT has compiled the hot path. */
  warmupCalls?: number;
  /** Timed batches; the median batch is reported. */
  samples?: number;
  /** Each batch repeats the call until it lasts at least this long, so timer resolution does not matter. */
  minBatchMs?: number;
}

const DEFAULT_TIMING: Required<TimingOptions> = { warmupCalls: 200, samples: 21, minBatchMs: 5 };

/** Keeps results alive so the optimiser cannot drop the timed calls. */
let sink = 0;

function consume(value: unknown): void {
  sink += typeof value === 'number' ? value : value === undefined ? 0 : 1;
}

/** Median wall-clock seconds per call of `fn`. */
export function medianSecondsPerCall(fn: () => unknown, options: TimingOptions = {}): number {
  const { warmupCalls, samples, minBatchMs } = { ...DEFAULT_TIMING, ...options };
  for (let i = 0; i < warmupCalls; i++) consume(fn());

  let batch = 1;
  for (;;) {
    const start = performance.now();
    for (let i = 0; i < batch; i++) consume(fn());
    if (performance.now() - start >= minBatchMs) break;
    batch *= 2;
  }

  const perCall: number[] = [];
  for (let s = 0; s < samples; s++) {
    const start = performance.now();
    for (let i = 0; i < batch; i++) consume(fn());
    perCall.push((performance.now() - start) / 1000 / batch);
  }
  perCall.sort((x, y) => x - y);
  return perCall[Math.floor(samples / 2)]!;
}

/** Three significant digits, fixed notation between 1e-3 and 1e6, so output reads the same run to run. */
export function formatValue(value: number): string {
  if (!Number.isFinite(value)) return String(value);
  const magnitude = Math.abs(value);
  if (magnitude !== 0 && (magnitude < 1e-3 || magnitude >= 1e6)) return value.toExponential(2);
  return Number(value.toPrecision(3)).toString();
}

/** A fixed-width table: benchmark, figure, value, unit, target and whether the target is met. */
export function formatTable(sections: Array<{ benchmark: string; rows: Row[] }>): string {
  const header = ['benchmark', 'figure', 'value', 'unit', 'target', 'met'];
  const lines = sections.flatMap(({ benchmark, rows }) =>
    rows.map((row) => [
      benchmark,
      row.name,
      formatValue(row.value),
      row.unit,
      row.target === undefined ? '' : `≤ ${formatValue(row.target)}`,
      row.target === undefined ? '' : row.value <= row.target ? 'ok' : 'OVER',
    ]),
  );
  const widths = header.map((_, c) => Math.max(header[c]!.length, ...lines.map((l) => l[c]!.length)));
  const numeric = new Set([2]);
  const render = (cells: string[]) =>
    cells
      .map((cell, c) => (numeric.has(c) ? cell.padStart(widths[c]!) : cell.padEnd(widths[c]!)))
      .join('  ')
      .trimEnd();
  return [render(header), render(widths.map((w) => '-'.repeat(w))), ...lines.map(render)].join('\n');
}
