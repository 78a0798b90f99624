// The control words a step line puts in the ROMs, for hovers and inlay hints: per store, the
// word the encoder lays for the alternative, and where a field comes from a decode map, one
// word per map row (the word then depends on the map's inputs). Laid by the encoder's own
// wordForAlternative, so what the editor shows is what the images hold. It does not encode
// whole stores or check anything: that is the encoder's and the checks' job.
import { wordForAlternative } from '../encode/encoder';
import type { DecodeMap, Machine, MapRow, StepAlt, Store } from '../model/types';
import { chipHex } from './describe';

/** One combination of map rows and the word it gives. */
export interface WordVariant {
  /** The row chosen from each map the alternative uses; empty when it uses none. */
  rows: { map: DecodeMap; row: MapRow }[];
  word: Uint32Array;
  /** Per chip, chip 0 first. */
  hex: string[];
}

export interface StoreWords {
  store: Store;
  variants: WordVariant[];
  /** Set when the combinations of map rows were more than `maxVariants` and were cut. */
  truncated: boolean;
}

export const maxVariants = 64;

/** The maps an alternative's fields come from, each once. */
export function mapsOf(machine: Machine, alt: StepAlt): DecodeMap[] {
  const maps: DecodeMap[] = [];
  for (const action of alt.actions) {
    if (action.value?.kind !== 'map') continue;
    const map = machine.maps.get(action.value.map);
    if (map && !maps.includes(map)) maps.push(map);
  }
  return maps;
}

/** The words of one alternative in every store that has a word layout. */
export function stepWords(machine: Machine, alt: StepAlt): StoreWords[] {
  const maps = mapsOf(machine, alt).filter((m) => m.rows.length > 0);
  // Every combination of one row per map, capped: a step rarely uses more than one map.
  let combos: { map: DecodeMap; row: MapRow }[][] = [[]];
  let truncated = false;
  for (const map of maps) {
    const next: { map: DecodeMap; row: MapRow }[][] = [];
    for (const combo of combos) {
      for (const row of map.rows) {
        if (next.length >= maxVariants) {
          truncated = true;
          break;
        }
        next.push([...combo, { map, row }]);
      }
    }
    combos = next;
  }
  const result: StoreWords[] = [];
  for (const store of machine.stores) {
    if (!store.word) continue;
    const layout = store.word;
    const variants = combos.map((rows) => {
      const word = wordForAlternative(machine, store, alt, new Map(rows.map((r) => [r.map.name, r.row.code])));
      return { rows, word, hex: chipHex(layout, word) };
    });
    result.push({ store, variants, truncated });
  }
  return result;
}

/**
 * The per-chip hex of several variants merged: a digit that differs between variants is
 * shown as `?`, so a hint can show one word for a step whose field comes from a map.
 */
export function mergedHex(variants: readonly WordVariant[]): string[] {
  if (variants.length === 0) return [];
  return variants[0].hex.map((first, chip) => {
    let merged = '';
    for (let i = 0; i < first.length; i++) {
      const digit = first[i];
      merged += variants.every((v) => v.hex[chip][i] === digit) ? digit : '?';
    }
    return merged;
  });
}
