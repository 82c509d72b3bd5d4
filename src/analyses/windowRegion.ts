/**
 * The operating window itself: the region of two settings in which the chip works (every split
 * pinned, no contactor starved of a phase, no inlet taking liquid back, no inlet above the
 * rating), found by tracing its boundary rather than by sampling a grid. Exports
 * `traceWindow`, `regionIn`, `polygonArea`, `limitName`, `settingsAt`, `coordinatesOf`, `regionSpans` and the types. No I/O, no units, no drawing.
 *
 * Each requirement is a smooth function c_k(u) ≥ 0 of the two axis values u while the chip
 * works: a split's room to each window limit, (Δ − low)/(high − low) and (high − Δ)/(high −
 * low); each contactor lane's flow; each pressure-set inlet's flow; each inlet's distance
 * below the rating; and the edges of the box searched. Their gradients come from the solved
 * chip's tangents (solver/sensitivity.ts: one factorisation and one solve per axis). The region
 * is bounded by pieces of the curves c_k = 0, which are traced by predictor–corrector
 * continuation (Allgower & Georg, Introduction to Numerical Continuation Methods, 2003, ch. 2,
 * from memory): from a point on the curve of the active requirement k, a step along its
 * tangent, then Newton's method on c_k along its gradient back onto the curve, with full
 * re-solves of the chip. Where another requirement j fails after a step, the corner c_k = c_j
 * = 0 is found by Newton's method on both, and the trace goes on along c_j. The boundary is
 * walked with the working region on its left (counter-clockwise) until it closes.
 *
 * Every boundary point is a converged solve on the working side, at most TOLERANCE of its
 * requirement's scale inside it (a split: of its window's width), so that a band 20 Pa wide
 * is traced as exactly as a wide one. Where the chip does not settle near the boundary (a
 * corner where feeds start to starve), the walk goes round the other way too and the gap
 * between its two ends is a piece of its own (`unsettled`), drawn straight. A boundary may only be approached from the working side:
 * past a split's limit the solve holds Δ at the limit (the split leaks), so c_k has no useful
 * value there.
 */
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { solveChip, warmStartFrom, type SolvedChip } from './chip.js';
import { operatingVerdict } from './verdict.js';
import { settingName, withSettings, type Setting } from './settings.js';
import { NetworkTangents, plainOutflow, type Tangent } from '../solver/sensitivity.js';
import { SolverWorkspace, type WarmStart } from '../solver/newton.js';
import type { SolverOptions } from '../solver/defaults.js';
import type { Chip } from '../network/model.js';
import { extent } from 'd3-array';

/** What a boundary piece is: which requirement reaches its limit along it. */
export type LimitKind = 'split-low' | 'split-high' | 'starved' | 'backflow' | 'rating' | 'range' | 'unsettled';

export interface WindowLimit {
  kind: LimitKind;
  /** The element: a split, a contactor (with the phase it is starved of), an inlet, or a box edge (`inA.pressure min`, `mean max`, …). */
  id: string;
  phase?: 'A' | 'B';
}

/**
 * The two coordinates of the search: the two settings as they are (`settings`), or their mean
 * and difference (`mean-difference`: u₁ = (θx + θy)/2, u₂ = θx − θy), in which a thin band
 * along the diagonal of the settings becomes a wide one.
 */
export type WindowCoordinates = 'settings' | 'mean-difference';

export interface WindowSearch {
  x: Setting;
  y: Setting;
  coordinates: WindowCoordinates;
  /** The box searched, in the coordinates' values (SI). */
  box: { x: [number, number]; y: [number, number] };
  /** Where to start, in the coordinates' values; default the middle of the box. */
  start?: [number, number];
  solver?: SolverOptions;
}

export interface BoundaryPiece {
  limit: WindowLimit;
  /** Requirements whose curves coincide with `limit`'s along this piece (e.g. the splits of a symmetric tree, all at one Δ). */
  alike: WindowLimit[];
  /** Points on the piece, in order, in the coordinates' values (SI). */
  points: Array<[number, number]>;
}

export interface WindowRegion {
  search: WindowSearch;
  /** A working point found inside, in the coordinates' values; undefined when none was found. */
  inside?: [number, number];
  /** The boundary, counter-clockwise, piece by piece. */
  pieces: BoundaryPiece[];
  /** The boundary as one closed polygon (the pieces' points in order). */
  polygon: Array<[number, number]>;
  closed: boolean;
  /** Chip solves made. */
  solves: number;
  /** Why there is no region, or why the trace stopped before closing. */
  message?: string;
}

/** A boundary point lies within this share of its requirement's scale inside the working side. */
const TOLERANCE = 1e-8;
/** First and smallest predictor step, as a share of the box's extent. */
const FIRST_STEP = 0.02;
const SMALLEST_STEP = 1e-3;
/**
 * Solver attempts per solve of the trace (warm, then cold): a point where the chip does not
 * settle from there costs two attempts, not every one the solver has (it halves the step).
 */
const TRACE_ATTEMPTS = 1;
/** Steps per attempt: from a neighbour on the boundary a solve settles in a few (as in window sweeps, SWEEP_SOLVER). */
const TRACE_ITERATIONS = 40;
/** Largest predictor step, as a share of the box's extent (a straight boundary needs few points). */
const LARGEST_STEP = 0.25;
/**
 * Where the corrector moved a predicted point by more than this share of the step, the boundary
 * bends: the next step is halved (it is drawn from its points, so a bend needs points).
 */
const BEND = 0.05;
/** Newton steps of a corrector before the predictor step is halved. */
const CORRECTOR_STEPS = 8;
/** Points before the trace gives up closing. */
const MAX_POINTS = 4000;

/** One requirement at a solved point: value ≥ 0 while it holds, its gradient in the coordinates, and its scale. */
interface Requirement {
  limit: WindowLimit;
  value: number;
  gradient: [number, number];
  scale: number;
}

/** A solved point of the search. */
interface Station {
  u: [number, number];
  solved: SolvedChip;
  works: boolean;
  requirements: Requirement[];
  /** Each leaking split's leak (> 0, m³/s, the way it runs) and its gradient in the search coordinates. */
  leaks: { id: string; value: number; gradient: [number, number] }[];
}

export function limitName(limit: WindowLimit): string {
  switch (limit.kind) {
    case 'split-low':
      return `split ${limit.id} at its low limit (A pushes into the B outlet)`;
    case 'split-high':
      return `split ${limit.id} at its high limit (B pushes into the A outlet)`;
    case 'starved':
      return `contactor ${limit.id} starved of ${limit.phase}`;
    case 'backflow':
      return `inlet ${limit.id} stops delivering`;
    case 'rating':
      return `inlet ${limit.id} at the pressure rating`;
    case 'range':
      return `edge of the range searched (${limit.id})`;
    case 'unsettled':
      return 'a stretch where the chip did not settle (drawn straight)';
  }
}

const same = (a: WindowLimit, b: WindowLimit) => a.kind === b.kind && a.id === b.id && a.phase === b.phase;

/**
 * Requirements on one curve, followed together: on a symmetric chip several splits sit at one Δ
 * with one gradient, and their curves c = 0 are one curve. The first is the one named.
 */
type Group = WindowLimit[];
const overlaps = (a: Group, b: Group) => a.some((x) => b.some((y) => same(x, y)));
/** Two requirements lie on one curve when their values and gradients agree to this (relative to the gradient). */
const COINCIDENT = 1e-9;

/** The setting values (θx, θy) of coordinates u. */
export function settingsAt(coordinates: WindowCoordinates, u: readonly [number, number]): [number, number] {
  return coordinates === 'settings' ? [u[0], u[1]] : [u[0] + u[1] / 2, u[0] - u[1] / 2];
}

/** The coordinates u of setting values (θx, θy): the inverse of `settingsAt`. */
export function coordinatesOf(coordinates: WindowCoordinates, theta: readonly [number, number]): [number, number] {
  return coordinates === 'settings' ? [theta[0], theta[1]] : [(theta[0] + theta[1]) / 2, theta[0] - theta[1]];
}

/** d(value)/du from d(value)/dθx and d(value)/dθy (the chain rule through `settingsAt`). */
function chain(coordinates: WindowCoordinates, dx: number, dy: number): [number, number] {
  return coordinates === 'settings' ? [dx, dy] : [dx + dy, (dx - dy) / 2];
}

export function traceWindow(chip: Chip, search: WindowSearch): WindowRegion {
  const { coordinates, box } = search;
  if (settingName(search.x) === settingName(search.y) || search.x.node === search.y.node) throw new RangeError('the two settings must belong to two different nodes');
  if (coordinates === 'mean-difference' && search.x.quantity !== search.y.quantity) throw new RangeError('mean and difference need two settings of one quantity');
  const extent: [number, number] = [box.x[1] - box.x[0], box.y[1] - box.y[0]];
  const workspace = new SolverWorkspace();
  const solver = { maxAttempts: TRACE_ATTEMPTS, maxIterations: TRACE_ITERATIONS, ...search.solver };
  let solves = 0;

  /** Solves the chip at u, warm from `from`; undefined when the solve does not settle. */
  const solveAt = (u: [number, number], from: WarmStart | undefined): Station | undefined => {
    const [tx, ty] = settingsAt(coordinates, u);
    const variant = withSettings(chip, [[search.x, tx], [search.y, ty]]);
    solves++;
    const solved = solveChip(variant, solver, from, workspace);
    if (!solved.result.converged) return undefined;
    const { requirements, leaks } = requirementsAt(solved, search, u, extent);
    const works = operatingVerdict(solved).length === 0 && requirements.every((r) => r.value >= 0);
    return { u, solved, works, requirements, leaks };
  };
  const warm = (s: Station) => warmStartFrom(s.solved);
  const scaled = (g: readonly [number, number]): [number, number] => [g[0] * extent[0], g[1] * extent[1]];
  const norm = (v: readonly [number, number]) => Math.hypot(v[0], v[1]);
  /** The member of a group nearest its limit at s (the group's value and gradient there). */
  const find = (s: Station, group: Group) => {
    let best: Requirement | undefined;
    for (const r of s.requirements) if (group.some((l) => same(l, r.limit)) && (!best || r.value < best.value)) best = r;
    return best!;
  };

  // 1. A working point.
  const start: [number, number] = search.start ?? [(box.x[0] + box.x[1]) / 2, (box.y[0] + box.y[1]) / 2];
  let inside = solveAt(start, undefined);
  inside = inside && !inside.works ? centred(inside, solveAt) : inside;
  if (!inside || !inside.works) {
    return { search, pieces: [], polygon: [], closed: false, solves, message: inside ? 'no working point found: no point near the start has every split pinned and every contactor fed' : 'the chip did not settle at the start of the search' };
  }

  // 2. Onto the boundary: along the gradient of the requirement that the linear model says is nearest.
  const nearest = (s: Station) => {
    let best: Requirement | undefined;
    let distance = Infinity;
    for (const r of s.requirements) {
      const d = r.value / Math.max(norm(scaled(r.gradient)), 1e-300);
      if (d < distance) [best, distance] = [r, d];
    }
    return best!;
  };

  /**
   * Newton's method on c_k(u) = TOLERANCE/2 · scale along c_k's gradient, from a station near
   * the curve; undefined when it does not settle on the working side in CORRECTOR_STEPS.
   */
  const ontoCurve = (from: Station, guess: [number, number], limit: Group): Station | undefined => {
    let u = guess;
    let last = from;
    for (let k = 0; k < CORRECTOR_STEPS; k++) {
      const s = solveAt(u, warm(last));
      if (!s) return undefined;
      const r = find(s, limit);
      const ownFails = r.value < 0 || !stateHolds(s, limit);
      // Another requirement fails here: the caller looks for the corner.
      if (!s.works && !ownFails) return undefined;
      // Past the limit (the split leaks, the feed starved), c_k has no useful value: go back
      // halfway toward the last working station.
      if (ownFails) {
        u = [(u[0] + last.u[0]) / 2, (u[1] + last.u[1]) / 2];
        continue;
      }
      if (r.value <= TOLERANCE * r.scale) return s;
      last = s;
      const g = r.gradient;
      const g2 = g[0] * g[0] + g[1] * g[1];
      if (!(g2 > 0)) return undefined;
      const excess = r.value - 0.5 * TOLERANCE * r.scale;
      u = [u[0] - (excess * g[0]) / g2, u[1] - (excess * g[1]) / g2];
    }
    return undefined;
  };

  /** Newton's method on c_k = c_j = TOLERANCE/2 (a corner of the boundary), from a working station. */
  const ontoCorner = (from: Station, a: Group, b: Group): Station | undefined => {
    let last = from;
    let u = last.u;
    for (let k = 0; k < CORRECTOR_STEPS + 4; k++) {
      const ra = find(last, a);
      const rb = find(last, b);
      const det = ra.gradient[0] * rb.gradient[1] - ra.gradient[1] * rb.gradient[0];
      if (!(Math.abs(det) > 0)) return undefined;
      const ea = ra.value - 0.5 * TOLERANCE * ra.scale;
      const eb = rb.value - 0.5 * TOLERANCE * rb.scale;
      const du = [-(ea * rb.gradient[1] - eb * ra.gradient[1]) / det, -(ra.gradient[0] * eb - rb.gradient[0] * ea) / det] as const;
      u = [last.u[0] + du[0], last.u[1] + du[1]];
      let s = solveAt(u, warm(last));
      // Overshot into a region that does not work: halve toward the last working station.
      let halvings = 0;
      while (s && !s.works && halvings < 30) {
        u = [(u[0] + last.u[0]) / 2, (u[1] + last.u[1]) / 2];
        s = solveAt(u, warm(last));
        halvings++;
      }
      if (!s || !s.works) return undefined;
      const sa = find(s, a);
      const sb = find(s, b);
      if (sa.value <= TOLERANCE * sa.scale && sb.value <= TOLERANCE * sb.scale) return s;
      last = s;
    }
    return undefined;
  };

  const first = nearest(inside);
  const firstGradient = first.gradient;
  const g2 = firstGradient[0] ** 2 + firstGradient[1] ** 2;
  const aim: [number, number] = [inside.u[0] - (first.value * firstGradient[0]) / g2, inside.u[1] - (first.value * firstGradient[1]) / g2];
  let station = ontoCurve(inside, aim, groupAt(inside, first.limit));
  if (!station) {
    // Another requirement fails first on the way (nearly parallel split lines do): bisect on
    // the way for the last working station, and go onto the curve of the requirement nearest
    // its limit there.
    let lo = inside;
    let [tLo, tHi] = [0, 1];
    for (let k = 0; k < 40 && tHi - tLo > 1e-6; k++) {
      const t = (tLo + tHi) / 2;
      const s = solveAt([inside.u[0] + t * (aim[0] - inside.u[0]), inside.u[1] + t * (aim[1] - inside.u[1])], warm(lo));
      if (s && s.works) [lo, tLo] = [s, t];
      else tHi = t;
    }
    const target = groupAt(lo, activeAt(lo, first.limit));
    const r = find(lo, target);
    const rg2 = r.gradient[0] ** 2 + r.gradient[1] ** 2;
    station = ontoCurve(lo, [lo.u[0] - (r.value * r.gradient[0]) / rg2, lo.u[1] - (r.value * r.gradient[1]) / rg2], target);
  }
  if (!station) return { search, inside: inside.u, pieces: [], polygon: [], closed: false, solves, message: `could not reach the boundary (${limitName(first.limit)}) from the working point` };
  // The requirement nearest on the boundary may be another than the one aimed at.
  let active = groupAt(station, activeAt(station, first.limit));

  // 3. Around the boundary: counter-clockwise until it closes; where it cannot go on (the chip
  // does not settle near a corner), clockwise from the start too, and the gap between the two
  // ends is a piece of its own.
  const piece = (group: Group, u: [number, number]): BoundaryPiece => ({ limit: group[0]!, alike: group.slice(1), points: [u] });
  const origin = station;
  const originGroup = active;
  const forward = walk(origin, originGroup, 1);
  let pieces = forward.pieces;
  let closed = forward.closed;
  let message = forward.message;
  if (!closed) {
    const backward = walk(origin, originGroup, -1);
    const back = backward.pieces.reverse().map((p) => ({ ...p, points: [...p.points].reverse() }));
    const gap: BoundaryPiece = { limit: { kind: 'unsettled', id: 'gap' }, alike: [], points: [forward.end.u, back[0]!.points[0]!] };
    // The two walks share the start: the first forward piece continues the last backward one.
    const joined = { ...back.at(-1)!, points: [...back.at(-1)!.points, ...pieces[0]!.points.slice(1)] };
    pieces = [...back.slice(0, -1), joined, ...pieces.slice(1), gap];
    message = `${message}; traced the other way round to ${limitName(backward.end.active[0]!)}, and the gap between the two ends is drawn straight`;
  }
  // The trace began inside a piece: its start and its end are one piece.
  if (closed && pieces.length > 1 && overlaps([pieces[0]!.limit, ...pieces[0]!.alike], [pieces.at(-1)!.limit, ...pieces.at(-1)!.alike])) {
    const last = pieces.pop()!;
    pieces[0]!.points = [...last.points, ...pieces[0]!.points.slice(1)];
  }
  const polygon = pieces.flatMap((p, i) => (i === 0 ? p.points : p.points.slice(1)));
  return { search, inside: inside.u, pieces, polygon, closed, solves, message };

  /**
   * Walks the boundary from a station on it, with the working side on the left (sense 1,
   * counter-clockwise) or on the right (−1), until it closes or cannot go on.
   */
  function walk(start: Station, startGroup: Group, sense: 1 | -1): { pieces: BoundaryPiece[]; closed: boolean; message?: string; end: Station & { active: Group } } {
    let station = start;
    let active = startGroup;
    const pieces: BoundaryPiece[] = [piece(active, station.u)];
    let startTangent: [number, number] | undefined;
    let step = FIRST_STEP;
    let travelled = 0;
    let points = 1;
    let message: string | undefined;
    while (points < MAX_POINTS) {
      const r = find(station, active);
      const n = scaled(r.gradient);
      const length = norm(n);
      // The tangent with the working side (c > 0, along n) on the left for sense 1, back in coordinates.
      const tangent: [number, number] = [((sense * n[1]) / length) * extent[0], ((-sense * n[0]) / length) * extent[1]];
      startTangent ??= tangent;
      const guess: [number, number] = [station.u[0] + step * tangent[0], station.u[1] + step * tangent[1]];
      const next = ontoCurve(station, guess, active);
      if (!next) {
        // Off the curve's piece (another requirement failed first, or the corrector lost it):
        // find which requirement fails first along the step, and the corner with it.
        const failing = failingAlong(station, guess, active);
        const broken = failing && groupAt(station, failing);
        const corner = broken && ontoCorner(station, active, broken);
        if (broken && corner) {
          addPoint(pieces, corner.u);
          pieces.push(piece(broken, corner.u));
          travelled += distanceScaled(station.u, corner.u, extent);
          station = corner;
          active = broken;
          points++;
          continue;
        }
        step /= 2;
        if (step < SMALLEST_STEP) {
          message = `the trace lost the boundary near ${limitName(active[0]!)}${broken ? ` and ${limitName(broken[0]!)}` : ''} (the chip did not settle there)`;
          break;
        }
        continue;
      }
      // Closing: back near where the trace began, on the same requirement, heading the same way.
      const heading = (tangent[0] * startTangent[0]) / extent[0] ** 2 + (tangent[1] * startTangent[1]) / extent[1] ** 2;
      // A chord of the curve strays from it by its sagitta, below BEND of the step.
      if (travelled > 4 * FIRST_STEP && overlaps(active, startGroup) && heading > 0 && passesNear(station.u, next.u, start.u, extent, Math.max(BEND * step, 1e-6))) {
        addPoint(pieces, start.u);
        return { pieces, closed: true, end: { ...start, active } };
      }
      addPoint(pieces, next.u);
      travelled += distanceScaled(station.u, next.u, extent);
      station = next;
      points++;
      // Steps grow where the boundary is straight and shrink where it bends.
      const bend = distanceScaled(guess, next.u, extent) / step;
      step = bend > BEND ? Math.max(step / 2, SMALLEST_STEP) : Math.min(LARGEST_STEP, step * 2);
    }
    return { pieces, closed: false, message: message ?? `the trace did not close within ${MAX_POINTS} points`, end: { ...station, active } };
  }

  function addPoint(list: BoundaryPiece[], u: [number, number]): void {
    list[list.length - 1]!.points.push(u);
  }

  /** The requirement that fails first on the straight way from a working station to `to`, other than `except`. */
  function failingAlong(from: Station, to: [number, number], except: Group): WindowLimit | undefined {
    const du = [to[0] - from.u[0], to[1] - from.u[1]] as const;
    let first: WindowLimit | undefined;
    let at = Infinity;
    for (const r of from.requirements) {
      if (except.some((l) => same(l, r.limit))) continue;
      const slope = r.gradient[0] * du[0] + r.gradient[1] * du[1];
      if (!(slope < 0)) continue;
      const t = r.value / -slope;
      if (t < at) [first, at] = [r.limit, t];
    }
    return at <= 1.5 ? first : undefined;
  }
}

/** Whether the state behind a requirement still holds at s (a split still pinned, a feed still open). */
/** Whether the states behind a group still hold at s (its splits still pinned, its feeds still open). */
function stateHolds(s: Station, group: Group): boolean {
  return group.every((limit) => {
    if (limit.kind === 'split-low' || limit.kind === 'split-high') return s.solved.result.splits.find((x) => x.id === limit.id)?.state === 'pinned';
    if (limit.kind === 'starved') {
      const c = s.solved.network.contactors.findIndex((el) => el.segment.id === limit.id);
      return s.solved.raw.feedStates[c] === 'open';
    }
    return true;
  });
}

/** The requirements on the curve of `limit` at s: itself first, then those whose value and gradient agree with it (COINCIDENT). */
function groupAt(s: Station, limit: WindowLimit): Group {
  const r0 = s.requirements.find((r) => same(r.limit, limit))!;
  const g = Math.hypot(r0.gradient[0], r0.gradient[1]);
  const alike = s.requirements.filter(
    (r) => r !== r0 && r.limit.kind === r0.limit.kind && Math.abs(r.value - r0.value) <= COINCIDENT && Math.hypot(r.gradient[0] - r0.gradient[0], r.gradient[1] - r0.gradient[1]) <= COINCIDENT * g,
  );
  return [limit, ...alike.map((r) => r.limit)];
}

/** The requirement to follow at a boundary station: the one aimed at, unless another is nearer its limit. */
function activeAt(s: Station, aimed: WindowLimit): WindowLimit {
  let best = s.requirements.find((r) => same(r.limit, aimed))!;
  for (const r of s.requirements) if (r.value / r.scale < best.value / best.scale) best = r;
  return best.limit;
}

function distanceScaled(a: readonly [number, number], b: readonly [number, number], extent: readonly [number, number]): number {
  return Math.hypot((a[0] - b[0]) / extent[0], (a[1] - b[1]) / extent[1]);
}

/** Whether the segment a → b passes within `radius` (scaled) of p, beyond its start a. */
function passesNear(a: readonly [number, number], b: readonly [number, number], p: readonly [number, number], extent: readonly [number, number], radius: number): boolean {
  const ax = a[0] / extent[0];
  const ay = a[1] / extent[1];
  const bx = b[0] / extent[0] - ax;
  const by = b[1] / extent[1] - ay;
  const px = p[0] / extent[0] - ax;
  const py = p[1] / extent[1] - ay;
  const t = (px * bx + py * by) / Math.max(bx * bx + by * by, 1e-300);
  if (!(t > 0)) return false;
  const c = Math.min(1, t);
  return Math.hypot(px - c * bx, py - c * by) <= radius;
}

/**
 * A working point near a station that does not work: least-squares steps toward the middle of
 * every window, a few times. A pinned split asks for its Δ at its window's centre; a leaking
 * split, whose Δ sits at its limit whatever the settings do (its gradient is 0 there), asks for
 * its leak to stop, LEAK_OVERSHOOT past where the linearised leak reaches 0 (the next step
 * then sees it pinned and centres it). Each row is divided by its gradient's length, so every
 * row is a distance in the search coordinates. Rows that are nearly parallel (the splits of a
 * thin band, whose limits run side by side) meet far away, so directions the rows hardly
 * determine are left out (a truncated eigen-decomposition of the normal equations, cut at
 * RANK_CUT of the largest eigenvalue; Hansen, 1987, BIT 27:534): the step is then the
 * least-norm one across the band.
 * Returns the last station (which may still not work).
 */
function centred(from: Station, solveAt: (u: [number, number], warm: WarmStart | undefined) => Station | undefined): Station {
  let s = from;
  for (let k = 0; k < 8 && !s.works; k++) {
    // Rows ĝ·du = −e, as normal equations.
    let a11 = 0;
    let a12 = 0;
    let a22 = 0;
    let b1 = 0;
    let b2 = 0;
    const row = (g: readonly [number, number], e: number) => {
      const length = Math.hypot(g[0], g[1]);
      if (!(length > 0)) return;
      const [x, y] = [g[0] / length, g[1] / length];
      a11 += x * x;
      a12 += x * y;
      a22 += y * y;
      b1 -= (x * e) / length;
      b2 -= (y * e) / length;
    };
    const leaking = new Set(s.leaks.map((l) => l.id));
    for (const low of s.requirements.filter((r) => r.limit.kind === 'split-low' && !leaking.has(r.limit.id))) {
      const high = s.requirements.find((r) => r.limit.kind === 'split-high' && r.limit.id === low.limit.id)!;
      row([(low.gradient[0] - high.gradient[0]) / 2, (low.gradient[1] - high.gradient[1]) / 2], (low.value - high.value) / 2);
    }
    for (const leak of s.leaks) row(leak.gradient, LEAK_OVERSHOOT * leak.value);
    const du = truncatedSolve(a11, a12, a22, b1, b2);
    if (!du) break;
    const next = solveAt([s.u[0] + du[0]!, s.u[1] + du[1]!], warmStartFrom(s.solved));
    if (!next) break;
    s = next;
  }
  return s;
}

/** How far past the linearised stop a leaking split's centring step aims (a step, not a physical quantity). */
const LEAK_OVERSHOOT = 1.25;
/**
 * Directions of the centring step whose eigenvalue is below this fraction of the largest are
 * left out: unit rows at less than about 2° to each other (sin² 2° ≈ 1.2e-3) count as one.
 */
const RANK_CUT = 1e-3;

/** The solution of [[a11, a12], [a12, a22]]·x = b in the eigen-directions above RANK_CUT, or undefined when there are none. */
function truncatedSolve(a11: number, a12: number, a22: number, b1: number, b2: number): [number, number] | undefined {
  const eigen = new EigenvalueDecomposition(new Matrix([[a11, a12], [a12, a22]]), { assumeSymmetric: true });
  const values = eigen.realEigenvalues;
  const largest = Math.max(values[0]!, values[1]!);
  if (!(largest > 0)) return undefined;
  const x: [number, number] = [0, 0];
  values.forEach((lambda, k) => {
    if (!(lambda > RANK_CUT * largest)) return;
    const [vx, vy] = eigen.eigenvectorMatrix.getColumn(k);
    const c = (vx! * b1 + vy! * b2) / lambda;
    x[0] += c * vx!;
    x[1] += c * vy!;
  });
  return x;
}

/** Every requirement at a solved point, with its gradient in the search coordinates. */
function requirementsAt(solved: SolvedChip, search: WindowSearch, u: [number, number], extent: [number, number]): Pick<Station, 'requirements' | 'leaks'> {
  const { network: net, raw, result, chip } = solved;
  const tangents = new NetworkTangents(net, raw, solved.workspace);
  const along = (s: Setting): Tangent => {
    const port = net.portsOf.get(s.node)![0]!;
    return tangents.tangent({ port, quantity: s.quantity });
  };
  const tx = along(search.x);
  const ty = along(search.y);
  const grad = (f: (t: Tangent) => number) => chain(search.coordinates, f(tx), f(ty));
  const out: Requirement[] = [];
  const leaks: Station['leaks'] = [];

  net.splits.forEach((sp, s) => {
    const state = result.splits[s]!.state;
    if (state !== 'pinned') {
      // leak > 0 runs far → near; a split leaking A to B has A's lane pushing into the B outlet.
      const sense = raw.leak[s]! >= 0 ? 1 : -1;
      const g = grad((t) => t.leak[s]!);
      leaks.push({ id: sp.node.id, value: sense * raw.leak[s]!, gradient: [sense * g[0], sense * g[1]] });
    }
    const [low, high] = sp.window;
    const width = Math.max(high - low, 1e-300);
    const delta = result.splits[s]!.pressureDifference;
    const g = grad((t) => t.splitDelta[s]!);
    out.push({ limit: { kind: 'split-low', id: sp.node.id }, value: (delta - low) / width, gradient: [g[0] / width, g[1] / width], scale: 1 });
    out.push({ limit: { kind: 'split-high', id: sp.node.id }, value: (high - delta) / width, gradient: [-g[0] / width, -g[1] / width], scale: 1 });
  });

  // Lane flows, each against the mean flow of its phase per contactor.
  const throughput = { A: result.summary.throughputA, B: result.summary.throughputB };
  const count = Math.max(1, net.contactors.length);
  net.contactors.forEach((el, c) => {
    const nearPhase = el.split?.nearPhase ?? (net.ports[el.nearIn]!.nominal > 0.5 ? 'A' : 'B');
    for (const [lane, phase] of [[0, nearPhase], [1, nearPhase === 'A' ? 'B' : 'A']] as const) {
      const mean = Math.max(throughput[phase] / count, 1e-300);
      const g = grad((t) => t.laneFlow[2 * c + lane]!);
      out.push({ limit: { kind: 'starved', id: el.segment.id, phase }, value: raw.laneFlow[2 * c + lane]! / mean, gradient: [g[0] / mean, g[1] / mean], scale: 1 });
    }
  });

  // Pressure-set inlets deliver; every inlet stays below the rating.
  const outflow = plainOutflow(net, raw.plainFlow);
  for (const [i, p] of net.ports.entries()) {
    if (p.node.kind !== 'inlet') continue;
    const phase = p.node.phase;
    if (p.fixed !== undefined) {
      const mean = Math.max(throughput[phase], 1e-300);
      const g = grad((t) => t.outflow[i]!);
      out.push({ limit: { kind: 'backflow', id: p.node.id }, value: outflow[i]! / mean, gradient: [g[0] / mean, g[1] / mean], scale: 1 });
    }
    if (chip.maxPressure !== undefined) {
      const rating = chip.maxPressure;
      const g = grad((t) => t.pressure[i]!);
      out.push({ limit: { kind: 'rating', id: p.node.id }, value: (rating - raw.pressure[i]!) / rating, gradient: [-g[0] / rating, -g[1] / rating], scale: 1 });
    }
  }

  // The box, in its own coordinates, each edge named by its axis.
  const { box } = search;
  const [nx, ny] = search.coordinates === 'settings' ? [settingName(search.x), settingName(search.y)] : ['mean', 'difference'];
  out.push({ limit: { kind: 'range', id: `${nx} min` }, value: (u[0] - box.x[0]) / extent[0], gradient: [1 / extent[0], 0], scale: 1 });
  out.push({ limit: { kind: 'range', id: `${nx} max` }, value: (box.x[1] - u[0]) / extent[0], gradient: [-1 / extent[0], 0], scale: 1 });
  out.push({ limit: { kind: 'range', id: `${ny} min` }, value: (u[1] - box.y[0]) / extent[1], gradient: [0, 1 / extent[1]], scale: 1 });
  out.push({ limit: { kind: 'range', id: `${ny} max` }, value: (box.y[1] - u[1]) / extent[1], gradient: [0, -1 / extent[1]], scale: 1 });
  return { requirements: out, leaks };
}

/**
 * Where the lines through `at` parallel to each axis cross the region's polygon: its extent in
 * x at at[1] and in y at at[0] (from the outermost crossings), or undefined where a line misses it.
 */
export function regionSpans(polygon: ReadonlyArray<readonly [number, number]>, at: readonly [number, number]): { x?: [number, number]; y?: [number, number] } {
  const crossings = (axis: 0 | 1): number[] => {
    const other = 1 - axis;
    const found: number[] = [];
    for (let k = 0; k + 1 < polygon.length; k++) {
      const a = polygon[k]!;
      const b = polygon[k + 1]!;
      if ((a[other] - at[other]) * (b[other] - at[other]) > 0 || a[other] === b[other]) continue;
      const t = (at[other] - a[other]) / (b[other] - a[other]);
      found.push(a[axis] + t * (b[axis] - a[axis]));
    }
    return found;
  };
  const span = (values: number[]): [number, number] | undefined => (values.length >= 2 ? (extent(values) as [number, number]) : undefined);
  return { x: span(crossings(0)), y: span(crossings(1)) };
}

/** A region traced in the settings' own coordinates, redrawn in other coordinates (a linear map of its points). */
export function regionIn(region: WindowRegion, coordinates: WindowCoordinates): WindowRegion {
  if (region.search.coordinates !== 'settings') throw new RangeError('only a region traced in the settings themselves can be redrawn');
  if (coordinates === 'settings') return region;
  const map = (u: readonly [number, number]) => coordinatesOf(coordinates, u);
  return {
    ...region,
    inside: region.inside && map(region.inside),
    pieces: region.pieces.map((p) => ({ ...p, points: p.points.map(map) })),
    polygon: region.polygon.map(map),
  };
}

/** The area enclosed by a closed polygon (shoelace formula), ≥ 0. */
export function polygonArea(polygon: ReadonlyArray<readonly [number, number]>): number {
  let twice = 0;
  for (let k = 0; k < polygon.length; k++) {
    const a = polygon[k]!;
    const b = polygon[(k + 1) % polygon.length]!;
    twice += a[0] * b[1] - b[0] * a[1];
  }
  return Math.abs(twice) / 2;
}
