/**
 * Path geometry of the chip drawing: the affine frame of a channel (u along, v across), the
 * bands of a contactor in it, arrowheads and leak triangles, as path text rounded by ../svg.ts
 * `num`. Exports `channelFrame`, `lanePath`, `arrowhead`, `leakTriangle`, `pinnedDiamond` and `ChannelFrame`.
 */
import { num } from '../svg.js';
import type { Point } from './common.js';

export interface ChannelFrame {
  /** The SVG transform that maps the unit square onto the channel. */
  transform: string;
  /** Screen point of (u along, v across). */
  at: (u: number, v: number) => Point;
}

/** Affine map of the unit square onto a channel from a to b, drawn w px wide, near wall (v = 0) on the left. */
export function channelFrame(a: Point, b: Point, w: number): ChannelFrame {
  const dx = b.x - a.x;
  const dy = b.y - a.y;
  const length = Math.hypot(dx, dy);
  // On screen (y down) a traveller heading along (dx, dy) has the right hand at (−dy, dx).
  const rx = (-dy / length) * w;
  const ry = (dx / length) * w;
  const m = [dx, dy, rx, ry, a.x - rx / 2, a.y - ry / 2].map((v) => Number(num(v)));
  return {
    transform: `matrix(${m.join(',')})`,
    at: (u, v) => ({ x: m[0]! * u + m[2]! * v + m[4]!, y: m[1]! * u + m[3]! * v + m[5]! }),
  };
}

/** The part v0 ≤ v ≤ v1 of a channel, as path text in screen coordinates. */
export function lanePath(frame: ChannelFrame, v0: number, v1: number): string {
  const corners = [frame.at(0, v0), frame.at(1, v0), frame.at(1, v1), frame.at(0, v1)];
  return corners.map((p, i) => `${i === 0 ? 'M' : 'L'}${num(p.x)},${num(p.y)}`).join('') + 'Z';
}

/** Arrowhead of size r at p pointing along angle θ, as path text. */
export function arrowhead(p: Point, theta: number, r: number, offset = 0): string {
  const c = Math.cos(theta);
  const s = Math.sin(theta);
  const at = (u: number, v: number) => `${num(p.x + (u + offset) * c - v * s)},${num(p.y + (u + offset) * s + v * c)}`;
  return `M${at(r, 0)}L${at(-r, r * 0.9)}L${at(-r * 0.4, 0)}L${at(-r, -r * 0.9)}Z`;
}

/** A triangle of size r at p pointing along θ. */
export function leakTriangle(p: Point, theta: number, r: number): string {
  const c = Math.cos(theta);
  const s = Math.sin(theta);
  const at = (u: number, v: number) => `${num(p.x + u * c - v * s)},${num(p.y + u * s + v * c)}`;
  return `M${at(r, 0)}L${at(-r * 0.6, r)}L${at(-r * 0.6, -r)}Z`;
}

/** The mark of a pinned split: a solid square of half-diagonal r standing on a corner at p (inlets are circles, outlets squares, flow arrows hollow chevrons). */
export function pinnedDiamond(p: Point, r: number): string {
  return `M${num(p.x)},${num(p.y - r)}L${num(p.x + r)},${num(p.y)}L${num(p.x)},${num(p.y + r)}L${num(p.x - r)},${num(p.y)}Z`;
}
