/**
 * The finite-element program FreeFem++ (Debian packages `freefem++`, `libfreefem++`) as an
 * independent reference for two-layer flow in etched and trapezoidal cross-sections, used only
 * by tests. Exports `freefemAvailable`, `freefemTwoLayer` and the shape types. Shares no code
 * with src/: the geometry is written here from the shape's definition, the script is written as
 * text and the answer read back from its output.
 *
 * The script solves ∫ μ ∇u·∇v = ∫ v (μ∇²u = −1, G = 1) with u = 0 on the walls and the cover,
 * with P3 Lagrange elements on a mesh built by FreeFem's `buildmesh`, the interface (the line
 * x = x_I, or a circular arc over that chord when a curvature is given) an internal border (so no element straddles it, μ is exact on every element, and the weak form
 * carries continuity of u and of μ∂u/∂n across it). Boundary points are spaced as
 * ½(1 − cos πt) along every border, which grades the mesh toward the corners where u is singular.
 * A circular wall is a polygon whose vertices sit slightly outside the circle, at r(1 + Δθ²/12)
 * for a local chord angle Δθ, so that each chord's mean distance from the centre is r: the
 * first variation of Q under a wall displacement δn is ∫ δn (∂u/∂n)(∂w/∂n) ds (Hadamard's
 * formula; Sokołowski & Zolésio, Introduction to Shape Optimization, 1992, §3.3), which then
 * vanishes chord by chord to leading order, and the geometric error falls from O(h²) of the
 * inscribed polygon to higher order (the refinement check of each test measures it).
 * Coordinates: y up, cover on y = 0, the channel below it; lengths in units of the depth.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

export type ReferenceShape =
  | { kind: 'rect'; width: number; depth: number }
  | { kind: 'etched'; maskWidth: number; depth: number }
  | { kind: 'trapezoid'; bottomWidth: number; depth: number; wallAngle: number };

export interface ReferenceFlow {
  qA: number;
  qB: number;
  /** Exact area of each layer (from the geometry, not the polygonal mesh). */
  areaA: number;
  areaB: number;
  triangles: number;
  script: string;
}

let available: boolean | undefined;

export function freefemAvailable(): boolean {
  if (available === undefined) {
    const probe = spawnSync('FreeFem++', ['-nw', '-v', '0', '-ns', '/dev/null'], { encoding: 'utf8' });
    available = probe.error === undefined;
  }
  return available;
}

type Border = { kind: 'line'; x0: number; y0: number; x1: number; y1: number } | { kind: 'arc'; cx: number; r: number; t0: number; t1: number };

const num = (v: number) => {
  if (!Number.isFinite(v)) throw new Error(`cannot write ${v} into a FreeFem++ script`);
  return v.toPrecision(17);
};

function borderLength(b: Border): number {
  return b.kind === 'line' ? Math.hypot(b.x1 - b.x0, b.y1 - b.y0) : b.r * Math.abs(b.t1 - b.t0);
}

/** The bottom chain (counter-clockwise, left to right, y ≤ 0) and the area under it left of x. */
function bottomChain(shape: ReferenceShape): { chain: Border[]; width: number; areaLeft: (x: number) => number } {
  const d = shape.depth;
  if (shape.kind === 'rect') {
    const w = shape.width;
    const chain: Border[] = [
      { kind: 'line', x0: 0, y0: 0, x1: 0, y1: -d },
      { kind: 'line', x0: 0, y0: -d, x1: w, y1: -d },
      { kind: 'line', x0: w, y0: -d, x1: w, y1: 0 },
    ];
    return { chain, width: w, areaLeft: (x: number) => x * d };
  }
  if (shape.kind === 'etched') {
    const w = shape.maskWidth;
    const chain: Border[] = [{ kind: 'arc', cx: d, r: d, t0: Math.PI, t1: 1.5 * Math.PI }];
    if (w > 0) chain.push({ kind: 'line', x0: d, y0: -d, x1: d + w, y1: -d });
    chain.push({ kind: 'arc', cx: d + w, r: d, t0: 1.5 * Math.PI, t1: 2 * Math.PI });
    // Area of a quarter disc cut at distance s from its vertical radius: ∫ √(d² − σ²) dσ.
    const segment = (s: number) => 0.5 * (s * Math.sqrt(d * d - s * s) + d * d * Math.asin(s / d));
    const areaLeft = (x: number) => {
      if (x <= d) return (Math.PI * d * d) / 4 - segment(d - x);
      if (x <= d + w) return (Math.PI * d * d) / 4 + (x - d) * d;
      return (Math.PI * d * d) / 4 + w * d + segment(x - d - w);
    };
    return { chain, width: w + 2 * d, areaLeft };
  }
  const b = shape.bottomWidth;
  const run = d / Math.tan(shape.wallAngle);
  const chain: Border[] = [{ kind: 'line', x0: 0, y0: 0, x1: run, y1: -d }];
  if (b > 0) chain.push({ kind: 'line', x0: run, y0: -d, x1: run + b, y1: -d });
  chain.push({ kind: 'line', x0: run + b, y0: -d, x1: 2 * run + b, y1: 0 });
  const areaLeft = (x: number) => {
    if (x <= run) return (x * x * d) / (2 * run);
    if (x <= run + b) return (run * d) / 2 + (x - run) * d;
    const r = 2 * run + b - x;
    return (run * d) / 2 + b * d + (run * d) / 2 - (r * r * d) / (2 * run);
  };
  return { chain, width: b + 2 * run, areaLeft };
}

const xOf = (b: Border, t: number) => (b.kind === 'line' ? b.x0 + t * (b.x1 - b.x0) : b.cx + b.r * Math.cos(b.t0 + t * (b.t1 - b.t0)));

/** Splits the chain where it crosses x = x_I; returns the two parts and the depth there. */
function splitAt(chain: Border[], xI: number): { left: Border[]; right: Border[]; yI: number } {
  const left: Border[] = [];
  const right: Border[] = [];
  let yI = NaN;
  for (const b of chain) {
    const x0 = xOf(b, 0);
    const x1 = xOf(b, 1);
    if (x1 <= xI) left.push(b);
    else if (x0 >= xI) right.push(b);
    else if (b.kind === 'line') {
      const t = (xI - b.x0) / (b.x1 - b.x0);
      yI = b.y0 + t * (b.y1 - b.y0);
      left.push({ ...b, x1: xI, y1: yI });
      right.push({ ...b, x0: xI, y0: yI });
    } else {
      const tI = 2 * Math.PI - Math.acos((xI - b.cx) / b.r);
      yI = b.r * Math.sin(tI);
      left.push({ ...b, t1: tI });
      right.push({ ...b, t0: tI });
    }
  }
  if (Number.isNaN(yI)) throw new Error(`interface x = ${xI} falls on a joint of the wall; choose another`);
  return { left, right, yI };
}

/**
 * Q_A and Q_B per unit gradient (dimensionless: lengths in units of the depth, in units of
 * depth⁴/viscosity) with the interface at x_I, phase A left of it; `density` boundary points per
 * unit length (before grading).
 */
export function freefemTwoLayer(shape: ReferenceShape, xI: number, muA: number, muB: number, density: number, curvature = 0): ReferenceFlow {
  if (!freefemAvailable()) throw new Error('FreeFem++ is not installed (Debian: apt-get install freefem++ libfreefem++); the cross-section reference checks need it');
  const scale = shape.depth;
  const unit: ReferenceShape =
    shape.kind === 'etched'
      ? { ...shape, maskWidth: shape.maskWidth / scale, depth: 1 }
      : shape.kind === 'rect'
        ? { ...shape, width: shape.width / scale, depth: 1 }
        : { ...shape, bottomWidth: shape.bottomWidth / scale, depth: 1 };
  const x = xI / scale;
  const { chain, width, areaLeft } = bottomChain(unit);
  const { left, right, yI } = splitAt(chain, x);
  const walls: Border[] = [...left, ...right, { kind: 'line', x0: width, y0: 0, x1: x, y1: 0 }, { kind: 'line', x0: x, y0: 0, x1: 0, y1: 0 }];
  const lines = ['load "Element_P3"', 'func real g(real t) { return (1 - cos(pi * t)) / 2; }'];
  const calls: string[] = [];
  const border = (name: string, b: Border, label: number) => {
    const points = Math.max(6, Math.ceil(density * borderLength(b)));
    let param: string;
    if (b.kind === 'line') {
      param = `x = ${num(b.x0)} + (${num(b.x1 - b.x0)}) * g(t); y = ${num(b.y0)} + (${num(b.y1 - b.y0)}) * g(t);`;
    } else {
      // Vertices at radius r(1 + Δθ²/12), Δθ the local chord angle: each chord then lies on the
      // arc on average, so the polygon's first-order shape error in Q cancels (see module comment).
      const dTheta = `(${num(Math.abs(b.t1 - b.t0) / points)} * pi / 2 * sin(pi * t))`;
      const angle = `(${num(b.t0)} + (${num(b.t1 - b.t0)}) * g(t))`;
      const radius = `(${num(b.r)} * (1 + ${dTheta} * ${dTheta} / 12))`;
      param = `x = ${num(b.cx)} + ${radius} * cos(${angle}); y = ${radius} * sin(${angle});`;
    }
    lines.push(`border ${name}(t = 0, 1) { ${param} label = ${label}; }`);
    calls.push(`${name}(${points})`);
  };
  walls.forEach((b, i) => border(`w${i}`, b, 1));
  const kappa = curvature * scale;
  let segment = 0;
  let apex = x;
  if (kappa === 0) border('gi', { kind: 'line', x0: x, y0: yI, x1: x, y1: 0 }, 2);
  else {
    // The arc over the chord from (x, y_I) to (x, 0), bulging to −x for κ > 0: a circle of radius
    // R = 1/|κ| through both ends, centre on the chord's perpendicular bisector on the +x side
    // (κ > 0) at distance R cos θ, sin θ = |κ|·h, h the half chord; vertices pushed out as for the
    // round walls, so that the layer areas carry no first-order polygon error.
    const h = -yI / 2;
    const R = 1 / Math.abs(kappa);
    const sigma = Math.sign(kappa);
    const theta = Math.asin(h / R);
    const xc = x + sigma * R * Math.cos(theta);
    const points = Math.max(6, Math.ceil(density * R * 2 * theta));
    const dPsi = `(${num((2 * theta) / points)} * pi / 2 * sin(pi * t))`;
    const psi = `(${num(theta)} - ${num(2 * theta)} * g(t))`;
    const radius = `(${num(R)} * (1 + ${dPsi} * ${dPsi} / 12))`;
    lines.push(`border gi(t = 0, 1) { x = ${num(xc)} - (${num(sigma)}) * ${radius} * cos(${psi}); y = ${num(-h)} - ${radius} * sin(${psi}); label = 2; }`);
    calls.push(`gi(${points})`);
    segment = R * R * (theta - Math.sin(theta) * Math.cos(theta));
    apex = x - sigma * R * (1 - Math.cos(theta));
  }
  lines.push(
    `mesh Th = buildmesh(${calls.join(' + ')});`,
    'fespace Vh(Th, P3);',
    'Vh u, v;',
    // Phase A is the region just left of the interface's middle (its apex when curved).
    `int ra = Th(${num(apex - 1e-3)}, ${num(yI / 2)}).region;`,
    'fespace Ph(Th, P0);',
    `Ph mu = (region == ra) ? ${num(muA)} : ${num(muB)};`,
    'solve flow(u, v) = int2d(Th, qforder = 9)(mu * (dx(u) * dx(v) + dy(u) * dy(v))) - int2d(Th, qforder = 9)(v) + on(1, u = 0);',
    'real qa = int2d(Th, qforder = 9)((region == ra) * u);',
    'real qb = int2d(Th, qforder = 9)((region != ra) * u);',
    'cout.precision(17);',
    'cout << "RESULT " << qa << " " << qb << " " << Th.nt << endl;',
  );
  const script = lines.join('\n') + '\n';
  const dir = mkdtempSync(join(tmpdir(), 'stratiflow-freefem-'));
  try {
    const file = join(dir, 'section.edp');
    writeFileSync(file, script);
    const run = spawnSync('FreeFem++', ['-nw', '-v', '0', file], {
      encoding: 'utf8',
      cwd: dir,
      timeout: 300_000,
      env: { ...process.env, FF_LOADPATH: process.env.FF_LOADPATH ?? '/usr/lib/freefem++' },
    });
    const match = /RESULT (\S+) (\S+) (\d+)/.exec(run.stdout ?? '');
    if (!match) throw new Error(`FreeFem++ gave no result (exit status ${run.status}):\n${run.stdout}\n${run.stderr}\n--- script ---\n${script}`);
    const q = scale ** 4;
    const total = areaLeft(width);
    const a = areaLeft(x) - Math.sign(kappa) * segment;
    return { qA: Number(match[1]) * q, qB: Number(match[2]) * q, areaA: a * scale ** 2, areaB: (total - a) * scale ** 2, triangles: Number(match[3]), script };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
