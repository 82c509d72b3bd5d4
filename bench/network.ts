/**
 * Timing of the whole-chip network solve (tracker issue 3): full two-phase solves of generated
 * ladders of 16, 64, 256 and 1024 contactors with the sparse linear solver, the exponent of the
 * time's growth with N, and the same solves with the dense linear solver as a baseline while it
 * stays under about a minute. Exports `benchNetwork`.
 *
 * The ladder is a well-designed one, so that every contactor carries nearly the same flow and
 * every split stays pinned (a ladder with narrow manifolds and many contactors starves its middle
 * contactors, which measures the maldistribution, not the solver): see DESIGN. Fluids and sizes
 * are the generator's invented demo values unless DESIGN overrides them. A solve includes
 * assembling the network; the holdup tables are cached across solves, as in a sweep.
 */
import { ladderLayout } from '../src/layout/generate.js';
import { layoutToChip } from '../src/layout/load.js';
import { solveChip } from '../src/analyses/chip.js';
import type { Chip } from '../src/network/model.js';
import type { LayoutFile } from '../src/layout/schema.js';
import { medianSecondsPerCall, type Row } from './report.js';

const SIZES = [16, 64, 256, 1024];
/** Target of the issue: 1024 contactors in at most 0.5 s, time growing no faster than N^1.2. */
const TARGET_1024_MS = 500;
const TARGET_EXPONENT = 1.2;
/** Dense solves are run while the predicted time (O(n³) from the last size) stays below this. */
const DENSE_BUDGET_S = 60;

const DESIGN = {
  manifold: { width: 3e-3, depth: 1e-3 },
  contactor: { width: 100e-6, depth: 50e-6, length: 40e-3, orientation: 'side' as const },
  drive: { A: { pressure: 20e3 }, B: { pressure: 20e3 } },
  outletPressure: { A: 0, B: 0 },
  splitWindow: { low: -500, high: 500 },
};

export const DESIGN_TEXT =
  'ladder: manifolds 3 mm × 1 mm, contactors 100 µm × 50 µm × 40 mm side by side, feeds and drains 100 µm × 50 µm × 5 mm, ' +
  'both inlets at 20 kPa, outlets at 0 Pa, split window ±500 Pa';

/** The well-designed ladder of DESIGN as a layout file. */
export function designedLadderLayout(contactors: number): LayoutFile {
  const { splitWindow, ...options } = DESIGN;
  return { ...ladderLayout({ contactors, ...options }), splitWindow };
}

function ladder(contactors: number): Chip {
  return layoutToChip(designedLadderLayout(contactors), `ladder of ${contactors}`);
}

const MILLI = 1e3;

interface Measured {
  seconds: number;
  iterations: number;
  converged: boolean;
  pinned: number;
  cv: number;
}

function measure(chip: Chip, linear: 'sparse' | 'dense', repeats: boolean): Measured {
  const once = solveChip(chip, { linear }).result;
  const seconds = repeats ? medianSecondsPerCall(() => solveChip(chip, { linear }).result.iterations, { warmupCalls: 1, samples: 5, minBatchMs: 0 }) : timeOnce(() => solveChip(chip, { linear }));
  return {
    seconds,
    iterations: once.iterations,
    converged: once.converged,
    pinned: once.splits.filter((s) => s.state === 'pinned').length,
    cv: once.summary.spread.total.cv,
  };
}

function timeOnce(fn: () => unknown): number {
  const start = performance.now();
  fn();
  return (performance.now() - start) / 1000;
}

/** Least-squares slope of log t against log N. */
function growthExponent(points: Array<[number, number]>): number {
  const xs = points.map(([n]) => Math.log(n));
  const ys = points.map(([, t]) => Math.log(t));
  const mx = xs.reduce((a, b) => a + b, 0) / xs.length;
  const my = ys.reduce((a, b) => a + b, 0) / ys.length;
  let sxy = 0;
  let sxx = 0;
  for (let i = 0; i < xs.length; i++) {
    sxy += (xs[i]! - mx) * (ys[i]! - my);
    sxx += (xs[i]! - mx) ** 2;
  }
  return sxy / sxx;
}

const status = (m: Measured, contactors: number) =>
  `${m.iterations} Newton steps, ${m.converged ? 'converged' : 'NOT CONVERGED'}, ${m.pinned}/${contactors} splits pinned, flow CV ${(100 * m.cv).toPrecision(2)}%`;

export function benchNetwork(): Row[] {
  console.error(`network: ${DESIGN_TEXT}`);
  const rows: Row[] = [];
  const sparse = new Map<number, Measured>();
  for (const n of SIZES) {
    const m = measure(ladder(n), 'sparse', true);
    sparse.set(n, m);
    rows.push({ name: `sparse solve, ${n} contactors (${status(m, n)})`, value: m.seconds * MILLI, unit: 'ms', target: n === 1024 ? TARGET_1024_MS : undefined });
  }
  rows.push({ name: `sparse solve: growth exponent of time with N (fit over ${SIZES.join(', ')})`, value: growthExponent(SIZES.map((n) => [n, sparse.get(n)!.seconds])), unit: '', target: TARGET_EXPONENT });
  // Fixed costs flatten the fit at small N; the last step shows the asymptotic growth.
  const [n1, n2] = SIZES.slice(-2) as [number, number];
  rows.push({ name: `sparse solve: growth exponent of time with N (${n1} → ${n2} only)`, value: growthExponent([[n1, sparse.get(n1)!.seconds], [n2, sparse.get(n2)!.seconds]]), unit: '', target: TARGET_EXPONENT });

  let last: { n: number; seconds: number } | undefined;
  for (const n of SIZES) {
    const predicted = last ? last.seconds * (n / last.n) ** 3 : 0;
    if (predicted > DENSE_BUDGET_S) {
      rows.push({ name: `dense solve, ${n} contactors: not run, predicted from O(n³) (over ${DENSE_BUDGET_S} s)`, value: predicted, unit: 's' });
      continue;
    }
    const m = measure(ladder(n), 'dense', false);
    last = { n, seconds: m.seconds };
    rows.push({ name: `dense solve, ${n} contactors (${status(m, n)})`, value: m.seconds * MILLI, unit: 'ms' });
    rows.push({ name: `dense / sparse time, ${n} contactors`, value: m.seconds / sparse.get(n)!.seconds, unit: '×' });
  }
  return rows;
}
