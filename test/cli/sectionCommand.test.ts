/**
 * `stratiflow section` as a user runs it: JSON contract, readable text, charts, and one clear
 * line with exit status 2 for bad input.
 */
import { describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { XMLValidator } from 'fast-xml-parser';
import { runCli } from '../support/cli.js';
import { flowFractionAt } from '../../src/physics/section.js';


const BASE = ['section', '--width', '200um', '--depth', '50um', '--mu-a', '6.5 mPa.s', '--mu-b', '1.9cP'];

describe('stratiflow section', () => {
  it('prints one JSON object with holdup, flowFraction and qPerGradient in SI units', async () => {
    const { code, out } = await runCli([...BASE, '--flow-fraction', '0.4', '--json']);
    expect(code).toBe(0);
    const json = JSON.parse(out);
    expect(json.flowFraction).toBe(0.4);
    // The holdup it reports carries the flow fraction it was asked for (round trip through the engine).
    const back = flowFractionAt({ shape: 'rect', width: 200e-6, depth: 50e-6, orientation: 'side' }, 6.5e-3, 1.9e-3, json.holdup);
    expect(back.flowFraction).toBeCloseTo(0.4, 12);
    expect(json.qPerGradient.a / (json.qPerGradient.a + json.qPerGradient.b)).toBeCloseTo(0.4, 12);
    expect(out).not.toMatch(/NaN|Infinity/);
  });

  it('gives the same flow fraction for equal viscosities at holdup 0.5 in either orientation (common practice)', async () => {
    for (const orientation of ['side', 'stacked']) {
      const { out } = await runCli(['section', '--width', '300um', '--depth', '40um', '--mu-a', '1mPa.s', '--mu-b', '1mPa.s', '--holdup', '0.5', '--orientation', orientation, '--json']);
      expect(JSON.parse(out).flowFraction).toBeCloseTo(0.5, 12);
    }
  });

  it('prints a readable summary with units without --json', async () => {
    const { code, out } = await runCli([...BASE, '--holdup', '0.5', '--flow', '10 uL/min']);
    expect(code).toBe(0);
    expect(out).toMatch(/holdup of A/);
    expect(out).toMatch(/mm\/s/);
    expect(out).toMatch(/velocity maximum lies at/);
  });

  it('writes well-formed SVG charts for --plot and --field', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'sf-section-'));
    const { code } = await runCli([...BASE, '--holdup', '0.6', '--plot', join(dir, 'p.svg'), '--field', join(dir, 'f.svg')]);
    expect(code).toBe(0);
    for (const name of ['p.svg', 'f.svg']) {
      const svg = readFileSync(join(dir, name), 'utf8');
      expect(XMLValidator.validate(svg)).toBe(true);
    }
    expect(readFileSync(join(dir, 'p.svg'), 'utf8')).toMatch(/infinitely deep plates/);
    expect(readFileSync(join(dir, 'f.svg'), 'utf8')).toMatch(/interface/);
  });

  const bad: Array<[string, string[], RegExp]> = [
    ['a non-positive width', ['--width', '-2um'], /--width: must be a positive length/],
    ['a zero viscosity', ['--mu-a', '0'], /--mu-a: must be a positive viscosity/],
    ['a holdup outside (0, 1)', ['--holdup', '1.5'], /--holdup: must lie strictly between 0 and 1/],
    ['a flow fraction outside (0, 1)', ['--holdup', '--flow-fraction', '--flow-fraction', '0'], /--flow-fraction: must lie strictly between 0 and 1/],
    ['an unknown unit', ['--depth', '50 blorbs'], /--depth: .*unit that is not known/],
    ['a unit of the wrong dimension', ['--depth', '50 kPa'], /--depth: .*is not a length/],
    ['both holdup and flow fraction', ['--flow-fraction', '0.5'], /exactly one/],
  ];
  for (const [what, change, message] of bad) {
    it(`rejects ${what} with one line naming the option and exit status 2`, async () => {
      const args = [...BASE, '--holdup', '0.5'];
      // Each pair [option, value] replaces that option's value (or adds it); [old, new, new, value] renames.
      if (change.length === 4) {
        const at = args.indexOf(change[0]!);
        args.splice(at, 2, change[2]!, change[3]!);
      } else {
        const at = args.indexOf(change[0]!);
        if (at >= 0) args.splice(at, 2, change[0]!, change[1]!);
        else args.push(change[0]!, change[1]!);
      }
      const { code, out, err } = await runCli(args);
      expect(code).toBe(2);
      expect(out).toBe('');
      expect(err.trim().split('\n')).toHaveLength(1);
      expect(err).toMatch(message);
      expect(err).not.toMatch(/\bat \w+ \(|Error:/);
    });
  }
});
