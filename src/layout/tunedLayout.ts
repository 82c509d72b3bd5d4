/**
 * A layout file with new values filled in: tuned settings (inlet and outlet pressures and
 * flows) and designed sizes (segment widths and lengths). YAML keeps its comments and order,
 * JSON is rewritten as JSON. Exports `tunedLayoutText`, `editedLayoutText` and `LayoutEdit`.
 * Text in, text out; the caller writes the file.
 */
import { parseDocument, isMap, isSeq, type Document } from 'yaml';
import type { Setting } from '../analyses/settings.js';
import type { TuneResult } from '../analyses/tune.js';
import { DISPLAY } from '../units/format.js';
import { StratiflowError } from '../errors.js';

/** One value to write: a node's setting, or a segment's key (`width`, `maskWidth`, `length`, …) in metres. */
export type LayoutEdit = { setting: Setting; value: number } | { segment: string; key: string; metres: number; note?: string };

/** The value as written into the layout: 15 significant digits, so a reload meets the targets to ~1e-12. */
function layoutQuantity(setting: Setting, value: number): string {
  // The layout's own unit words (kPa, uL/min: units/quantity.ts reads both), at the factors of DISPLAY.
  return setting.quantity === 'pressure'
    ? `${Number((value * DISPLAY.pressure.factor).toPrecision(15))} kPa`
    : `${Number((value * DISPLAY.flow.factor).toPrecision(15))} uL/min`;
}

function listOf(doc: Document, key: 'nodes' | 'segments') {
  const list = doc.get(key);
  if (!isSeq(list)) throw new StratiflowError('bad-file', `the layout has no list of ${key}`);
  return list;
}

/**
 * The layout file's text with the edits filled in (YAML keeps its comments and order; JSON is
 * rewritten as JSON). An inlet whose flow is set loses its pressure and vice versa; a segment
 * edit with a note appends it to the segment's own.
 */
export function editedLayoutText(original: string, json: boolean, edits: LayoutEdit[], header: string): string {
  const doc = parseDocument(original);
  for (const edit of edits) {
    if ('setting' in edit) {
      const item = listOf(doc, 'nodes').items.find((n) => isMap(n) && n.get('id') === edit.setting.node);
      if (!isMap(item)) throw new StratiflowError('bad-file', `node "${edit.setting.node}" not found in the file`);
      item.set(edit.setting.quantity, layoutQuantity(edit.setting, edit.value));
      if (item.get('type') === 'inlet') item.delete(edit.setting.quantity === 'pressure' ? 'flow' : 'pressure');
    } else {
      const item = listOf(doc, 'segments').items.find((s) => isMap(s) && s.get('id') === edit.segment);
      if (!isMap(item)) throw new StratiflowError('bad-file', `segment "${edit.segment}" not found in the file`);
      item.set(edit.key, `${Number((edit.metres * DISPLAY.length.factor).toPrecision(15))} um`);
      if (edit.note) {
        const before = item.get('note');
        item.set('note', typeof before === 'string' && before !== '' ? `${before}; ${edit.note}` : edit.note);
      }
    }
  }
  if (json) return JSON.stringify(doc.toJS(), null, 2) + '\n';
  doc.commentBefore = [header, doc.commentBefore].filter(Boolean).join('\n');
  return doc.toString({ lineWidth: 0 });
}

/** The layout file's text with the tuned settings filled in. */
export function tunedLayoutText(original: string, json: boolean, result: TuneResult, header: string): string {
  return editedLayoutText(
    original,
    json,
    result.settings.map((s) => ({ setting: s.setting, value: s.value })),
    header,
  );
}
