/**
 * The whole command at scale (tracker issue 17): `stratiflow solve` of well-designed ladders of
 * 1024, 4096 and 16 384 contactors from their JSON files, run as a user runs it (the built CLI
 * in a fresh Node process), timed from outside (wall clock, best of REPEATS) with the peak
 * resident memory the process reports; the growth exponent of the wall time from 1024 to
 * 16 384 contactors, and the memory per contactor. Exports `benchScale`.
 *
 * The ladder is bench/network.ts's DESIGN (invented demo values). The CLI is built first
 * (tsc -p tsconfig.build.json), so the figures are those of the code in the checkout.
 */
import { spawnSync } from 'node:child_process';
import { buildDist, ROOT } from './built.js';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { designedLadderLayout } from './network.js';
import type { Row } from './report.js';

const SIZES = [1024, 4096, 16384];
const REPEATS = 3;
/** Targets of the issue: wall seconds and peak MB per size; growth exponent 1024 → 16 384. */
const TARGETS: Record<number, { seconds: number; megabytes: number }> = {
  4096: { seconds: 2.5, megabytes: 600 },
  16384: { seconds: 10, megabytes: 1536 },
};
const TARGET_EXPONENT = 1.1;

/** Runs the CLI once; wall seconds from here, peak resident MB as the child reports it. */
function runOnce(root: string, file: string): { seconds: number; megabytes: number; ok: boolean } {
  const script = [
    `import { main } from ${JSON.stringify(join(root, 'dist/cli/main.js'))};`,
    `import { readFileSync } from 'node:fs';`,
    `const code = await main(['node', 'stratiflow', 'solve', ${JSON.stringify(file)}, '--json']);`,
    // The peak resident set of this process's own memory: VmHWM (Linux), which starts afresh at
    // exec, where getrusage's maxRSS keeps the parent's peak from before the fork (a bench run
    // after the live-report bench read 474 MB for a 1024-contactor solve that peaks at 157 MB).
    `let kB = process.resourceUsage().maxRSS;`,
    `try { kB = Number(/VmHWM:\\s+(\\d+) kB/.exec(readFileSync('/proc/self/status', 'utf8'))[1]); } catch {}`,
    `process.stderr.write('\\nRSS ' + kB + ' CODE ' + code + '\\n');`,
  ].join('\n');
  const start = performance.now();
  const run = spawnSync(process.execPath, ['--input-type=module', '-e', script], { encoding: 'utf8', maxBuffer: 1 << 30 });
  const seconds = (performance.now() - start) / 1000;
  const match = /RSS (\d+) CODE (\d+)/.exec(run.stderr ?? '');
  return { seconds, megabytes: match ? Number(match[1]) / 1024 : NaN, ok: match?.[2] === '0' && JSON.parse(run.stdout).converged === true };
}

export function benchScale(): Row[] {
  const root = ROOT;
  buildDist();
  const dir = mkdtempSync(join(tmpdir(), 'stratiflow-scale-'));
  const rows: Row[] = [];
  const wall: number[] = [];
  try {
    for (const n of SIZES) {
      const file = join(dir, `ladder-${n}.json`);
      writeFileSync(file, JSON.stringify(designedLadderLayout(n)));
      const runs = Array.from({ length: REPEATS }, () => runOnce(root, file));
      const seconds = Math.min(...runs.map((r) => r.seconds));
      const megabytes = Math.max(...runs.map((r) => r.megabytes));
      wall.push(seconds);
      rows.push(
        { name: `solve ${n} contactors from JSON, wall (best of ${REPEATS})`, value: seconds, unit: 's', target: TARGETS[n]?.seconds },
        { name: `solve ${n} contactors, peak memory`, value: megabytes, unit: 'MB', target: TARGETS[n]?.megabytes },
        { name: `solve ${n} contactors, memory per contactor`, value: (megabytes * 1024) / n, unit: 'kB' },
        { name: `solve ${n} contactors, runs that converged`, value: runs.filter((r) => r.ok).length, unit: `of ${REPEATS}` },
      );
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  const exponent = Math.log(wall[wall.length - 1]! / wall[0]!) / Math.log(SIZES[SIZES.length - 1]! / SIZES[0]!);
  rows.push({ name: `growth exponent of the wall time, ${SIZES[0]} → ${SIZES[SIZES.length - 1]}`, value: exponent, unit: '', target: TARGET_EXPONENT });
  return rows;
}
