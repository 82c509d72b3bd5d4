/**
 * `stratiflow make ladder|tree`: write a generated layout file (YAML or JSON by extension). Unless
 * `--outlet-b` is given, the B outlet's back-pressure is set so that the splits sit as near the
 * middle of their windows as it can put them (analyses/centring.ts); with `--design`, the feeds
 * and outlet arms are then sized for even flow (analyses/design.ts) and the command fails with
 * exit status 3 where that design falls short.
 */
import type { Command } from 'commander';
import { stringify } from 'yaml';
import { ladderLayout, treeLayout, LADDER_DEFAULTS, TREE_DEFAULTS, type CommonOptions } from '../layout/generate.js';
import { numberOption, quantityOption, wholeNumberOption, choice } from './options.js';
import { outputFile, writeOutputs } from './io.js';
import { StratiflowError, optionError } from '../errors.js';
import type { LayoutFile } from '../layout/schema.js';
import { layoutToChip } from '../layout/load.js';
import { centreSplits } from '../analyses/centring.js';
import { designChip } from '../analyses/design.js';
import { DESIGN_DEFAULTS, designVariables, parseDesignVariable } from '../analyses/designSpec.js';
import { fmt } from '../units/format.js';
import type { CommandContext } from './context.js';

type Raw = Record<string, string | undefined>;

function common(o: Raw, defaults: CommonOptions): Partial<CommonOptions> {
  const q = (key: string, flag: string, dim: Parameters<typeof quantityOption>[2]) => quantityOption(o[key], flag, dim, true);
  const size = (prefix: string, base: { width: number; depth: number; length: number }) => ({
    width: q(`${prefix}Width`, `--${prefix}-width`, 'length') ?? base.width,
    depth: q('depth', '--depth', 'length') ?? base.depth,
    length: q(`${prefix}Length`, `--${prefix}-length`, 'length') ?? base.length,
  });
  const drive = (phase: 'A' | 'B') => {
    const p = q(`pressure${phase}`, `--pressure-${phase.toLowerCase()}`, 'pressure');
    const f = q(`flow${phase}`, `--flow-${phase.toLowerCase()}`, 'flow');
    if (p !== undefined && f !== undefined) throw optionError(`--flow-${phase.toLowerCase()}`, `give either --pressure-${phase.toLowerCase()} or --flow-${phase.toLowerCase()}`);
    return f !== undefined ? { flow: f } : p !== undefined ? { pressure: p } : undefined;
  };
  const driveA = drive('A');
  const driveB = drive('B');
  if ((driveA === undefined) !== (driveB === undefined)) throw optionError(driveA ? '--flow-b' : '--flow-a', 'give the drive of both phases (a pressure or a flow each), or of neither');
  const tubeDiameter = q('tubeDiameter', '--tube-diameter', 'length');
  const tubeLength = q('tubeLength', '--tube-length', 'length');
  return {
    name: o.name ?? defaults.name,
    phaseA: { ...defaults.phaseA, viscosity: q('muA', '--mu-a', 'viscosity') ?? defaults.phaseA.viscosity },
    phaseB: { ...defaults.phaseB, viscosity: q('muB', '--mu-b', 'viscosity') ?? defaults.phaseB.viscosity },
    interfacialTension: q('tension', '--tension', 'tension') ?? defaults.interfacialTension,
    drive: driveA && driveB ? { A: driveA, B: driveB } : undefined,
    outletPressure: { A: q('outletA', '--outlet-a', 'pressure') ?? defaults.outletPressure.A, B: q('outletB', '--outlet-b', 'pressure') ?? 0 },
    contactor: { ...size('contactor', defaults.contactor), orientation: (o.orientation ?? 'side') as 'side' | 'stacked' },
    feed: size('feed', defaults.feed),
    drain: size('drain', defaults.drain),
    tubing: tubeDiameter !== undefined || tubeLength !== undefined ? { diameter: tubeDiameter ?? 250e-6, length: tubeLength ?? 0.3 } : undefined,
  };
}

function commonFlags(cmd: Command): Command {
  return cmd
    .option('--out <file>', 'layout file to write (.yaml, .yml or .json)')
    .option('--name <text>', 'chip name')
    .option('--mu-a <viscosity>', 'viscosity of phase A')
    .option('--mu-b <viscosity>', 'viscosity of phase B')
    .option('--tension <tension>', 'interfacial tension between A and B')
    .option('--pressure-a <pressure>', 'inlet pressure of phase A')
    .option('--pressure-b <pressure>', 'inlet pressure of phase B')
    .option('--flow-a <flow>', 'inlet flow of phase A for the whole chip (instead of a pressure); default 2 uL/min for each contactor')
    .option('--flow-b <flow>', 'inlet flow of phase B for the whole chip (instead of a pressure); default 2 uL/min for each contactor')
    .option('--outlet-a <pressure>', 'back-pressure at the outlet of phase A', '0')
    .option('--outlet-b <pressure>', 'back-pressure at the outlet of phase B (default: the one that puts the splits nearest the middle of their windows, found by solving the chip: about a second at 16 contactors, tens of seconds at a thousand)')
    .option('--design', 'size the feeds and outlet arms (one width each) and the B back-pressure for even flow, every split pinned 10 % inside its window (as stratiflow design --vary feed.widths --vary drain.widths --vary outB.pressure)')
    .option('--depth <length>', 'etch depth of all channels')
    .option('--contactor-width <length>', 'contactor width')
    .option('--contactor-length <length>', 'contactor length')
    .addOption(choice('--orientation <side|stacked>', 'layers in the contactors', ['side', 'stacked'], 'side'))
    .option('--feed-width <length>', 'width of the feed channels into each merge')
    .option('--feed-length <length>', 'length of the feed channels')
    .option('--drain-width <length>', 'width of the outlet arms after each split')
    .option('--drain-length <length>', 'length of the outlet arms')
    .option('--pitch <length>', 'distance between neighbouring contactors')
    .option('--tube-diameter <length>', 'tubing to each inlet and outlet: inner diameter')
    .option('--tube-length <length>', 'tubing to each inlet and outlet: length');
}

/**
 * The generated layout made to work: the B back-pressure centred unless given, then with
 * `--design` the feeds and arms sized. Returns the layout to write and a line saying what was done.
 */
function working(layout: LayoutFile, o: Raw): { layout: LayoutFile; note: string } {
  const outletB = layout.nodes.find((n): n is Extract<LayoutFile['nodes'][number], { type: 'outlet' }> => n.id === 'outB' && n.type === 'outlet')!;
  let chip = layoutToChip(layout, 'generated layout');
  const setting = { node: 'outB', quantity: 'pressure' as const };
  let note = '';
  if (o.outletB === undefined) {
    const centred = centreSplits(chip, [setting], [0], [[0, chip.maxPressure ?? Infinity]]);
    outletB.pressure = Number(centred.values[0]!.toPrecision(12));
    chip = layoutToChip(layout, 'generated layout');
    const pinned = centred.solved.result.splits.filter((s) => s.state === 'pinned').length;
    note = `outB back-pressure ${fmt(outletB.pressure as number)} Pa: ${pinned} of ${centred.solved.result.splits.length} splits pinned`;
  }
  if (!o.design) return { layout, note };
  const result = designChip(chip, {
    variables: designVariables(chip, ['feed.widths', 'drain.widths'].map(parseDesignVariable), DESIGN_DEFAULTS),
    settings: [{ setting }],
    flowCv: 0.01,
    margin: { fraction: 0.1 },
  });
  if (!result.met) throw new StratiflowError('infeasible', `--design: no design of the generated chip meets its targets: ${result.binding[0] ?? 'no step improves it further'}`);
  const sizes = new Map(result.variables.flatMap((v) => v.sizes.map((s) => [s.segment, s.after] as const)));
  for (const segment of layout.segments) {
    const width = sizes.get(segment.id);
    if (width !== undefined) segment.width = Number(width.toPrecision(12));
  }
  outletB.pressure = Number(result.settings[0]!.after.toPrecision(12));
  return { layout, note: `designed: flow per contactor CV ${fmt(100 * result.flowCv.after.A, 3)} % (A), ${fmt(100 * result.flowCv.after.B, 3)} % (B), every split pinned; outB back-pressure ${fmt(outletB.pressure as number)} Pa` };
}

function emit(context: CommandContext, generated: LayoutFile, o: Raw): void {
  const { layout, note } = working(generated, o);
  const out = o.out;
  const text = out?.endsWith('.json') ? JSON.stringify(layout, null, 2) + '\n' : stringify(layout, { lineWidth: 0 });
  if (out) {
    writeOutputs([{ path: outputFile(out, '--out'), option: '--out', content: text }]);
    if (note) context.out(`${out}: ${note}\n`);
  } else context.out(text);
}

export function registerMake(program: Command, context: CommandContext): void {
  const make = program.command('make').description('Write a generated layout file for a numbered-up chip.');
  commonFlags(make.command('ladder').description('N contactors in a row between two distribution and two collection manifolds.'))
    .option('--contactors <n>', 'number of contactors', '16')
    .option('--manifold-width <length>', 'manifold width')
    .addOption(choice('--inlets <end|middle>', 'where the inlets join the distribution manifolds', ['end', 'middle'], 'end'))
    .addOption(choice('--outlets <same|opposite|middle>', 'where the outlets leave the collection manifolds: at the inlets\' end (a U-shaped path, whose contactors differ least), the opposite end or the middle', ['same', 'opposite', 'middle'], 'same'))
    .action((o: Raw) => {
      const contactors = wholeNumberOption(o.contactors, '--contactors', 1, 100000)!;
      emit(context, ladderLayout({
        ...common(o, LADDER_DEFAULTS),
        contactors,
        pitch: quantityOption(o.pitch, '--pitch', 'length', true) ?? LADDER_DEFAULTS.pitch,
        manifold: { width: quantityOption(o.manifoldWidth, '--manifold-width', 'length', true) ?? LADDER_DEFAULTS.manifold.width, depth: quantityOption(o.depth, '--depth', 'length', true) ?? LADDER_DEFAULTS.manifold.depth },
        inletAt: o.inlets as 'end' | 'middle',
        outletAt: o.outlets as 'same' | 'opposite' | 'middle',
      }), o);
    });
  commonFlags(make.command('tree').description('2^k contactors fed and drained by bifurcating trees.'))
    .option('--levels <k>', 'number of bifurcation levels (2^k contactors)', '4')
    .option('--branch-width <length>', 'width of the root branch')
    .option('--branch-scale <factor>', 'width factor from one level to the next', '0.8')
    .action((o: Raw) => {
      // With the default root branch (4 mm, halved at every level) the leaves of a twelfth level
      // would be shorter than the 1 µm the loader accepts for a channel.
      const levels = wholeNumberOption(o.levels, '--levels', 0, 11)!;
      emit(context, treeLayout({
        ...common(o, TREE_DEFAULTS),
        levels,
        pitch: quantityOption(o.pitch, '--pitch', 'length', true) ?? TREE_DEFAULTS.pitch,
        branch: { ...TREE_DEFAULTS.branch, width: quantityOption(o.branchWidth, '--branch-width', 'length', true) ?? TREE_DEFAULTS.branch.width, depth: quantityOption(o.depth, '--depth', 'length', true) ?? TREE_DEFAULTS.branch.depth },
        branchScale: numberOption(o.branchScale, '--branch-scale')!,
      }), o);
    });
}
