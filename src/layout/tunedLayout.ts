/**
 * A layout file with tuned settings filled in: YAML keeps its comments and order, JSON is
 * rewritten as JSON. Exports `tunedLayoutText`. Text in, text out; the caller writes the file.
 */
import { parseDocument, isMap, isSeq } from 'yaml';
import type { Setting } from '../analyses/settings.js';
import type { TuneResult } from '../analyses/tune.js';
import { DISPLAY } from '../units/format.js';
import { StratiflowError } from '../errors.js';

/** The value as written into the layout: 15 significant digits, so a reload meets the targets to ~1e-12. */
function layoutQuantity(setting: Setting, value: number): string {
  // The layout's own unit words (kPa, uL/min: units/quantity.ts reads both), at the factors of DISPLAY.
  return setting.quantity === 'pressure'
    ? `${Number((value * DISPLAY.pressure.factor).toPrecision(15))} kPa`
    : `${Number((value * DISPLAY.flow.factor).toPrecision(15))} uL/min`;
}

/**
 * The layout file's text with the tuned settings filled in (YAML keeps its comments and order;
 * JSON is rewritten as JSON). An inlet whose flow is tuned loses its pressure and vice versa.
 */
export function tunedLayoutText(original: string, json: boolean, result: TuneResult, header: string): string {
  const doc = parseDocument(original);
  const nodes = doc.get('nodes');
  if (!isSeq(nodes)) throw new StratiflowError('bad-file', 'the layout has no list of nodes');
  for (const s of result.settings) {
    const item = nodes.items.find((n) => isMap(n) && n.get('id') === s.setting.node);
    if (!isMap(item)) throw new StratiflowError('bad-file', `node "${s.setting.node}" not found in the file`);
    item.set(s.setting.quantity, layoutQuantity(s.setting, s.value));
    if (item.get('type') === 'inlet') item.delete(s.setting.quantity === 'pressure' ? 'flow' : 'pressure');
  }
  if (json) return JSON.stringify(doc.toJS(), null, 2) + '\n';
  doc.commentBefore = [header, doc.commentBefore].filter(Boolean).join('\n');
  return doc.toString({ lineWidth: 0 });
}
