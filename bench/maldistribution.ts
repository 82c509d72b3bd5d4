/**
 * The whole-chip solve on badly distributed chips (tracker issue 10): ladders whose narrow
 * manifolds carry much of the pressure drop, so that far contactors starve and splits leak —
 * exactly the chips a maldistribution check is for. For each case it prints whether the solve
 * converged, its Newton steps, its time, and how many contactors it found starved and splits
 * leaking. Exports `benchMaldistribution`.
 *
 * The geometry is an invented demo: manifolds 600 × 50 µm (phase A) and 500 × 50 µm (phase B)
 * at 2 mm pitch, feeds 100 × 50 µm × 5 mm, contactors 200 × 50 µm × 20 mm side by side, outlet
 * arms 100 × 50 µm × 8 mm, 250 µm tubing of 300 mm at every port, an aqueous two-phase pair of
 * 6.5 and 1.9 mPa·s; inlets at 60 and 52 kPa (or, pump-fed, 2 µL/min per contactor of each
 * phase), outlets at 0 and 4.55 kPa; collectors leave at the far end (Z-type) or the inlet end
 * (U-type).
 */
import { ladderLayout } from '../src/layout/generate.js';
import { layoutToChip } from '../src/layout/load.js';
import { solveChip } from '../src/analyses/chip.js';
import type { Chip } from '../src/network/model.js';
import { starvedPhase } from '../src/analyses/verdict.js';
import type { Row } from './report.js';

/** Target of the issue: every case converges; 1024 contactors in at most 0.5 s. */
const TARGET_1024_MS = 500;

interface Case {
  name: string;
  contactors: number;
  drive: 'pressure' | 'pump';
  outletAt: 'opposite' | 'same';
}

const CASES: Case[] = [
  { name: 'Z-type, pressure-fed', contactors: 128, drive: 'pressure', outletAt: 'opposite' },
  { name: 'Z-type, pressure-fed', contactors: 256, drive: 'pressure', outletAt: 'opposite' },
  { name: 'Z-type, pressure-fed', contactors: 512, drive: 'pressure', outletAt: 'opposite' },
  { name: 'Z-type, pressure-fed', contactors: 1024, drive: 'pressure', outletAt: 'opposite' },
  { name: 'U-type, pressure-fed', contactors: 256, drive: 'pressure', outletAt: 'same' },
  { name: 'U-type, pressure-fed', contactors: 1024, drive: 'pressure', outletAt: 'same' },
  { name: 'Z-type, pump-fed', contactors: 256, drive: 'pump', outletAt: 'opposite' },
  { name: 'Z-type, pump-fed', contactors: 512, drive: 'pump', outletAt: 'opposite' },
];

export function badlyDistributedLadder(contactors: number, drive: Case['drive'], outletAt: Case['outletAt']): Chip {
  const perContactor = 2e-9 / 60;
  const layout = ladderLayout({
    contactors,
    pitch: 2e-3,
    manifold: { width: 600e-6, depth: 50e-6 },
    feed: { width: 100e-6, depth: 50e-6, length: 5e-3 },
    contactor: { width: 200e-6, depth: 50e-6, length: 20e-3, orientation: 'side' },
    drain: { width: 100e-6, depth: 50e-6, length: 8e-3 },
    drive: drive === 'pump' ? { A: { flow: contactors * perContactor }, B: { flow: contactors * perContactor } } : { A: { pressure: 60e3 }, B: { pressure: 52e3 } },
    outletPressure: { A: 0, B: 4550 },
    outletAt,
    tubing: { diameter: 250e-6, length: 0.3 },
    phaseA: { label: 'PEG-rich phase', viscosity: 6.5e-3, density: 1100 },
    phaseB: { label: 'salt-rich phase', viscosity: 1.9e-3, density: 1200 },
  });
  for (const segment of layout.segments) if (segment.group === 'manifold' && segment.id.includes('B')) segment.width = 500e-6;
  return layoutToChip(layout, `badly distributed ladder of ${contactors}`);
}

export function benchMaldistribution(): Row[] {
  const rows: Row[] = [];
  for (const c of CASES) {
    const chip = badlyDistributedLadder(c.contactors, c.drive, c.outletAt);
    const start = performance.now();
    const { result } = solveChip(chip);
    const ms = performance.now() - start;
    const label = `${c.name}, ${c.contactors} contactors`;
    const starved = result.contactors.filter((k) => starvedPhase(k) !== null).length;
    const leaking = result.splits.filter((s) => s.state !== 'pinned').length;
    rows.push({ name: `${label}: did not converge (1 yes, 0 no)`, value: result.converged ? 0 : 1, unit: '', target: 0 });
    rows.push({ name: `${label}: Newton steps`, value: result.iterations, unit: '' });
    rows.push({ name: `${label}: time`, value: ms, unit: 'ms', ...(c.contactors === 1024 ? { target: TARGET_1024_MS } : {}) });
    rows.push({ name: `${label}: contactors starved of a phase`, value: starved, unit: '' });
    rows.push({ name: `${label}: splits leaking`, value: leaking, unit: '' });
  }
  return rows;
}
