/**
 * Settings: what a user sets on a chip and a sweep or a tuning varies. A setting is an inlet's
 * or outlet's pressure or an inlet's flow, named `node.quantity` (`inA.pressure`, `inB.flow`).
 * A setting's value is what a layout file holds: a pressure excludes the reservoir head that the
 * chip model adds to it. Exports `parseSetting`, `settingName`, `settingValue`, `withSettings`
 * and the types. Used by ./window.ts and the tune modules (./tune*.ts).
 */
import type { SolvedChip } from './chip.js';
import type { Chip, ChipNode } from '../network/model.js';
import { StratiflowError } from '../errors.js';

export type SettingQuantity = 'pressure' | 'flow';

export interface Setting {
  node: string;
  quantity: SettingQuantity;
}

export function settingName(setting: Setting): string {
  return `${setting.node}.${setting.quantity}`;
}

/** Reads `node.pressure` or `node.flow`; the node must be an inlet (either) or an outlet (pressure). */
export function parseSetting(text: string, chip: Chip): Setting {
  const match = /^(.+)\.(pressure|flow)$/.exec(text.trim());
  if (!match) throw new StratiflowError('bad-option', `"${text}" is not a setting: write node.pressure or node.flow, e.g. inA.pressure`);
  const [, id, quantity] = match as unknown as [string, string, SettingQuantity];
  const node = chip.nodes.find((n) => n.id === id);
  if (!node) throw new StratiflowError('bad-option', `no node "${id}" in the layout`);
  if (node.kind !== 'inlet' && node.kind !== 'outlet') throw new StratiflowError('bad-option', `node "${id}" is a ${node.kind}; only inlets and outlets have settings`);
  if (node.kind === 'outlet' && quantity === 'flow') throw new StratiflowError('bad-option', `outlet "${id}" is held at a pressure; its flow cannot be set`);
  return { node: id!, quantity };
}

function settingNode(chip: Chip, setting: Setting): Extract<ChipNode, { kind: 'inlet' | 'outlet' }> {
  const node = chip.nodes.find((n) => n.id === setting.node);
  if (!node || (node.kind !== 'inlet' && node.kind !== 'outlet')) throw new StratiflowError('bad-option', `no inlet or outlet "${setting.node}"`);
  return node;
}

/**
 * The value of a setting at a solved state: a set pressure or flow as given, otherwise what the
 * solve found (the pressure a flow-set inlet needs, the flow a pressure-set inlet delivers).
 */
export function settingValue(solved: SolvedChip, setting: Setting): number {
  const node = settingNode(solved.chip, setting);
  if (node.kind === 'outlet') return node.pressure - node.head;
  const inlet = solved.result.summary.inlets.find((i) => i.id === node.id)!;
  return setting.quantity === 'pressure' ? inlet.pressure - node.head : inlet.flow;
}

/** A copy of the chip with the given settings; setting an inlet's flow frees its pressure and vice versa. */
export function withSettings(chip: Chip, values: ReadonlyArray<readonly [Setting, number]>): Chip {
  const byNode = new Map<string, Array<readonly [Setting, number]>>();
  for (const entry of values) byNode.set(entry[0].node, [...(byNode.get(entry[0].node) ?? []), entry]);
  const nodes = chip.nodes.map((node): ChipNode => {
    const entries = byNode.get(node.id);
    if (!entries) return node;
    let next = node;
    for (const [setting, value] of entries) {
      if (next.kind === 'outlet') next = { ...next, pressure: value + next.head };
      else if (next.kind === 'inlet') next = setting.quantity === 'pressure' ? { ...next, pressure: value + next.head, flow: undefined } : { ...next, flow: value, pressure: undefined };
    }
    return next;
  });
  return { ...chip, nodes };
}
