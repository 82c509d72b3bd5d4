/**
 * `stratiflow tune` as a user runs it: the tuned layout it writes meets the targets when loaded
 * and solved again (targets measured in test/support/targets.ts, not by tune.ts), and an
 * unreachable target ends with one line and exit status 3. The ladders are the generator's
 * invented demo chips.
 */
import { describe, expect, it } from 'vitest';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { stringify } from 'yaml';
import { loadLayout } from '../../src/layout/load.js';
import { ladderLayout } from '../../src/layout/generate.js';
import { runCli } from '../support/cli.js';
import { expectTargetsMet } from '../support/targets.js';

const uLmin = 1e-9 / 60;

describe('stratiflow tune', () => {
  const dir = mkdtempSync(join(tmpdir(), 'stratiflow-tune-'));

  it('writes a tuned layout that, loaded and solved, meets the targets to 1e-9, and prints the cautions', async () => {
    const file = join(dir, 'ladder.yaml');
    writeFileSync(file, `# a demo chip\n${stringify(ladderLayout({ contactors: 4 }))}`);
    const { code, out, err } = await runCli(['tune', file, '--throughput', '16uL/min', '--ratio', '0.18', '--vary', 'inA.pressure', '--vary', 'inB.pressure', '--vary', 'outA.pressure=0:5kPa']);
    expect(err).toBe('');
    expect(code).toBe(0);
    expect(out).toMatch(/tuned layout written to .*ladder-tuned\.yaml/);
    expect(out).toMatch(/lab safety rules/);
    expect(out).toMatch(/within its rating of 300 kPa/);
    // How tightly the tuned settings must be held, as solve prints it.
    expect(out).toMatch(/hold tolerances/);
    expect(out).toMatch(/inA\.pressure .* Pa … \+.* Pa/);
    const tuned = loadLayout(join(dir, 'ladder-tuned.yaml'));
    expectTargetsMet(tuned, [{ kind: 'throughput', value: 16 * uLmin }, { kind: 'ratio', value: 0.18 }]);
    expect(tuned.nodes.find((n) => n.id === 'inA')).toMatchObject({ flow: undefined });
  });

  it('ends an infeasible target with one line and exit status 3', async () => {
    const file = join(dir, 'ladder16.yaml');
    writeFileSync(file, stringify(ladderLayout({ contactors: 16 })));
    const spread = await runCli(['tune', file, '--throughput', '64uL/min', '--ratio', '0.18', '--vary', 'inA.pressure', '--vary', 'inB.pressure', '--vary', 'outA.pressure']);
    expect(spread.code).toBe(3);
    expect(spread.err.trim().split('\n')).toHaveLength(1);
    expect(spread.err).toMatch(/^stratiflow: .*ladder16\.yaml: the contactors spread more than the split window allows/);
    const rating = await runCli(['tune', file, '--throughput', '60mL/min', '--ratio', '0.18']);
    expect(rating.code).toBe(3);
    expect(rating.err).toMatch(/above the chip's pressure rating of 300 kPa/);
    expect(rating.out).toBe('');
  });
});
