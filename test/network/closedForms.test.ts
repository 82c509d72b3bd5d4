/**
 * Single-phase networks against closed forms: channels in series and in parallel, and a manifold
 * ladder of uniform resistances. The conductances are recomputed here from the textbook formulas
 * (not from src/physics), so a wrong law or a wrong network assembly both show.
 */
import { describe, expect, it } from 'vitest';
import type { LayoutNode, LayoutSegment } from '../../src/layout/schema.js';
import { layoutToChip } from '../../src/layout/load.js';
import { solveChip } from '../../src/analyses/chip.js';
import { DEMO_PHASES, layoutOf, rect, tube } from '../support/layouts.js';

const MU = DEMO_PHASES.A.viscosity;
const RELATIVE = 1e-10;

/**
 * Laminar flow through a rectangular duct w × h (h ≤ w), per unit pressure gradient
 * (White, Viscous Fluid Flow, 3rd ed., 2006, eq. 3-48):
 *   k = (h³w/12μ) [1 − (192h/π⁵w) Σ_{n = 1,3,5,…} tanh(nπw/2h)/n⁵],
 * summed here term by term to n = 20001 (the tail beyond is below 1e-20 of the sum).
 */
function whiteRectConductance(width: number, depth: number, mu: number): number {
  const h = Math.min(width, depth);
  const w = Math.max(width, depth);
  let sum = 0;
  for (let n = 20001; n >= 1; n -= 2) sum += Math.tanh((n * Math.PI * w) / (2 * h)) / n ** 5;
  return ((h ** 3 * w) / (12 * mu)) * (1 - ((192 * h) / (Math.PI ** 5 * w)) * sum);
}

/** Hagen–Poiseuille: k = πd⁴/(128μ) (Hagen, 1839; Poiseuille, 1840; White, 2006, eq. 3-52). */
function poiseuilleConductance(diameter: number, mu: number): number {
  return (Math.PI * diameter ** 4) / (128 * mu);
}

/** R = L/k for a segment of the builders (Pa·s/m³). */
function resistance(s: LayoutSegment): number {
  const k = s.shape === 'rect' ? whiteRectConductance(s.width as number, s.depth as number, MU) : poiseuilleConductance(s.diameter as number, MU);
  return (s.length as number) / k;
}

const close = (got: number, want: number, scale = Math.abs(want)) => expect(Math.abs(got - want)).toBeLessThanOrEqual(RELATIVE * scale);

function solve(name: string, nodes: LayoutNode[], segments: LayoutSegment[]) {
  const { result } = solveChip(layoutToChip(layoutOf(name, nodes, segments), name));
  expect(result.converged, result.message).toBe(true);
  const pressure = new Map(result.nodes.map((n) => [n.id, n.pressure]));
  const flow = new Map(result.segments.map((s) => [s.id, s.flowA + s.flowB]));
  return { result, pressure, flow };
}

describe('channels in series', () => {
  const segments = [rect('a', 'in', 'j1', 200e-6, 50e-6, 10e-3), tube('b', 'j1', 'j2', 150e-6, 0.05), rect('c', 'j2', 'out', 50e-6, 400e-6, 3e-3)];
  const junctions: LayoutNode[] = [{ id: 'j1', type: 'junction' }, { id: 'j2', type: 'junction' }];
  const total = segments.reduce((sum, s) => sum + resistance(s), 0);

  it('carry Q = Δp / ΣR between two pressures, and the inner pressures divide Δp in proportion to R', () => {
    // Resistances in series add (Hagen–Poiseuille per channel; common practice).
    const pIn = 25e3;
    const pOut = 2e3;
    const { pressure, flow } = solve('series', [{ id: 'in', type: 'inlet', phase: 'A', pressure: pIn }, ...junctions, { id: 'out', type: 'outlet', pressure: pOut }], segments);
    const q = (pIn - pOut) / total;
    for (const s of segments) close(flow.get(s.id)!, q);
    close(pressure.get('j1')!, pIn - q * resistance(segments[0]!), pIn);
    close(pressure.get('j2')!, pOut + q * resistance(segments[2]!), pIn);
  });

  it('need p_in = p_out + Q·ΣR when the inlet sets the flow', () => {
    const q = 3e-11;
    const pOut = 1e3;
    const { pressure, flow } = solve('series by flow', [{ id: 'in', type: 'inlet', phase: 'A', flow: q }, ...junctions, { id: 'out', type: 'outlet', pressure: pOut }], segments);
    close(pressure.get('in')!, pOut + q * total);
    for (const s of segments) close(flow.get(s.id)!, q);
  });
});

describe('channels in parallel', () => {
  // Three different channels between the same two junctions (a multigraph), fed through one entry.
  const bundle = [rect('p1', 'j1', 'j2', 100e-6, 50e-6, 20e-3), rect('p2', 'j1', 'j2', 300e-6, 50e-6, 25e-3), tube('p3', 'j2', 'j1', 100e-6, 0.01)];
  const entry = rect('entry', 'in', 'j1', 400e-6, 50e-6, 2e-3);
  const exit = rect('exit', 'j2', 'out', 400e-6, 50e-6, 2e-3);

  it('carry Δp·ΣG in total, split in proportion to their conductances', () => {
    // Conductances in parallel add (common practice); the entry and exit are in series with the bundle.
    const pIn = 15e3;
    const pOut = 0;
    const g = bundle.map((s) => 1 / resistance(s));
    const bundleResistance = 1 / g.reduce((a, b) => a + b, 0);
    const q = (pIn - pOut) / (resistance(entry) + bundleResistance + resistance(exit));
    const { pressure, flow } = solve('parallel', [{ id: 'in', type: 'inlet', phase: 'A', pressure: pIn }, { id: 'j1', type: 'junction' }, { id: 'j2', type: 'junction' }, { id: 'out', type: 'outlet', pressure: pOut }], [entry, ...bundle, exit]);
    close(flow.get('entry')!, q);
    close(flow.get('exit')!, q);
    const drop = q * bundleResistance;
    close(pressure.get('j1')! - pressure.get('j2')!, drop, pIn);
    // p3 is written j2 → j1, so its flow is negative.
    close(flow.get('p1')!, drop * g[0]!, q);
    close(flow.get('p2')!, drop * g[1]!, q);
    close(flow.get('p3')!, -drop * g[2]!, q);
  });
});

describe('a manifold ladder of uniform resistances', () => {
  /**
   * Inlet at P → entry segment (R_s) → node 1 → … → node N along the manifold (R_s between
   * neighbours); every node drains through one rung (R_p) into a single outlet at p_0.
   * With V_k = p_k − p_0, an inner node conserves flow:
   *   (V_{k−1} − V_k)/R_s − (V_k − V_{k+1})/R_s − V_k/R_p = 0  ⇒  V_{k+1} − 2 cosh θ V_k + V_{k−1} = 0,
   *   cosh θ = 1 + R_s/(2R_p),
   * and the last node, (V_{N−1} − V_N)/R_s = V_N/R_p, is the same recurrence with V_{N+1} = V_N.
   * Solutions symmetric about k = N + ½ with V_0 = P − p_0 give
   *   V_k = (P − p_0) cosh((N + ½ − k)θ) / cosh((N + ½)θ)
   * (the uniform resistor ladder, common practice; derived here). Independently, the input
   * resistance is the continued fraction R_N = R_p, R_k = R_p ∥ (R_s + R_{k+1}), R_in = R_s + R_1.
   */
  const N = 20;
  const P = 12e3;
  const p0 = 2e3;
  const manifold = { width: 300e-6, depth: 50e-6, length: 1e-3 };
  const rung = { width: 100e-6, depth: 50e-6, length: 8e-3 };
  const nodes: LayoutNode[] = [{ id: 'in', type: 'inlet', phase: 'A', pressure: P }, { id: 'out', type: 'outlet', pressure: p0 }];
  const segments: LayoutSegment[] = [rect('m0', 'in', 'n1', manifold.width, manifold.depth, manifold.length)];
  for (let k = 1; k <= N; k++) {
    nodes.push({ id: `n${k}`, type: 'junction' });
    segments.push(rect(`r${k}`, `n${k}`, 'out', rung.width, rung.depth, rung.length));
    if (k < N) segments.push(rect(`m${k}`, `n${k}`, `n${k + 1}`, manifold.width, manifold.depth, manifold.length));
  }
  const Rs = resistance(segments[0]!);
  const Rp = resistance(segments[1]!);
  const theta = Math.acosh(1 + Rs / (2 * Rp));

  it('has rung flows V_k/R_p with V_k = (P − p_0) cosh((N + ½ − k)θ)/cosh((N + ½)θ)', () => {
    expect(Rs / Rp).toBeGreaterThan(0.01); // the maldistribution is large enough to be seen
    const { pressure, flow } = solve('uniform ladder', nodes, segments);
    const v = (k: number) => ((P - p0) * Math.cosh((N + 0.5 - k) * theta)) / Math.cosh((N + 0.5) * theta);
    for (let k = 1; k <= N; k++) {
      close(pressure.get(`n${k}`)!, p0 + v(k), P);
      close(flow.get(`r${k}`)!, v(k) / Rp, v(1) / Rp);
    }
    expect(flow.get(`r${N}`)! / flow.get('r1')!).toBeLessThan(0.5);
  });

  it('draws the flow (P − p_0)/R_in given by the continued fraction of the ladder', () => {
    let r = Rp;
    for (let k = N - 1; k >= 1; k--) r = 1 / (1 / Rp + 1 / (Rs + r));
    const { flow, result } = solve('uniform ladder', nodes, segments);
    close(flow.get('m0')!, (P - p0) / (Rs + r));
    close(result.summary.inlets[0]!.flow, (P - p0) / (Rs + r));
  });
});
