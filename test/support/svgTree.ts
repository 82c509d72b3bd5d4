/**
 * A small reader of the SVG drawings for tests: elements with their attributes, found by class,
 * and the geometry of their transforms and paths.
 */
import { expect } from 'vitest';
import { XMLParser, XMLValidator } from 'fast-xml-parser';

export interface Element {
  name: string;
  attrs: Record<string, string>;
  children: Element[];
  text: string;
}

const parser = new XMLParser({ ignoreAttributes: false, attributeNamePrefix: '', preserveOrder: true, trimValues: false, parseAttributeValue: false, parseTagValue: false });

function toElements(nodes: Array<Record<string, unknown>>): Element[] {
  const out: Element[] = [];
  for (const node of nodes) {
    const name = Object.keys(node).find((k) => k !== ':@');
    if (name === undefined || name === '#text') continue;
    const children = toElements(node[name] as Array<Record<string, unknown>>);
    const text = (node[name] as Array<Record<string, unknown>>).filter((c) => '#text' in c).map((c) => String(c['#text'])).join('');
    out.push({ name, attrs: (node[':@'] as Record<string, string>) ?? {}, children, text });
  }
  return out;
}

export function parse(svg: string): Element {
  expect(XMLValidator.validate(svg)).toBe(true);
  return toElements(parser.parse(svg))[0]!;
}

export function all(root: Element, test: (e: Element) => boolean): Element[] {
  const found: Element[] = [];
  const visit = (e: Element) => {
    if (test(e)) found.push(e);
    e.children.forEach(visit);
  };
  visit(root);
  return found;
}

export const hasClass = (cls: string) => (e: Element) => (e.attrs.class ?? '').split(' ').includes(cls);
export const textOf = (e: Element): string => e.text + e.children.map(textOf).join('');

/**
 * The affine map of an SVG `matrix(a,b,c,d,e,f)` transform: (x, y) → (a·x + c·y + e, b·x + d·y + f)
 * (W3C, Scalable Vector Graphics (SVG) 1.1, 2011, section 7.4 "The 'transform' attribute").
 */
export function matrixOf(transform: string): (x: number, y: number) => [number, number] {
  const m = transform.match(/^matrix\(([^)]*)\)$/);
  expect(m, transform).not.toBeNull();
  const [a, b, c, d, e, f] = m![1]!.split(/[ ,]+/).map(Number) as [number, number, number, number, number, number];
  return (x, y) => [a * x + c * y + e, b * x + d * y + f];
}

export const distance = (p: [number, number], q: [number, number]) => Math.hypot(p[0] - q[0], p[1] - q[1]);

/** The first point of a path's d: for the drawing's triangles, the tip. */
export function firstPoint(d: string): [number, number] {
  const m = d.match(/^M([-\d.]+),([-\d.]+)/);
  return [Number(m![1]), Number(m![2])];
}

