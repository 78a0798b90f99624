// What the table says at one point of the input universe: which class and step alternative
// apply and which field codes its decode maps give. Points no class, step, alternative or map
// row covers hold the fill word, and say why.
import { matchesBits } from '../model/numbers';
import type { ClassDef, DecodeMap, Machine, MapRow, StepAlt } from '../model/types';
import { type PointInputs } from './universe';

export type FillReason = 'no-class' | 'no-step' | 'no-alternative' | 'no-map-row';

export interface PointDecode {
  cls?: ClassDef;
  step: number;
  alt?: StepAlt;
  fillReason?: FillReason;
  /** Codes of the fields the alternative sets (directly or through a map). */
  fieldCodes: Map<string, number>;
  /** The decode-map rows that gave them, in the alternative's order (the prover blames a row by them). */
  mapRows: { map: DecodeMap; row: MapRow }[];
}

/** Prepared lookups so decoding a point does not search the whole model each time. */
export class PointDecoder {
  private readonly byOpcode = new Map<number, ClassDef>();
  /** Shared results: points with the same alternative and map rows decode to one object. */
  private readonly shared = new Map<StepAlt, Map<string, PointDecode>>();

  constructor(private readonly machine: Machine) {
    for (const cls of machine.classes) if (cls.opcode !== undefined && !this.byOpcode.has(cls.opcode)) this.byOpcode.set(cls.opcode, cls);
  }

  /**
   * The class whose opcode agrees with the instruction bits the point carries. Bits 1..0 of a
   * 32-bit RISC-V instruction are always 11, so they need no address lines.
   */
  classFor(inputs: PointInputs): ClassDef | undefined {
    const mask = (inputs.irMask & 0x7c) | 3;
    const value = (inputs.ir & 0x7c) | 3;
    if (mask === 0x7f) return this.byOpcode.get(value);
    let found: ClassDef | undefined;
    for (const [opcode, cls] of this.byOpcode) {
      if ((opcode & mask) !== value) continue;
      if (found) return undefined; // The store cannot tell two classes apart here.
      found = cls;
    }
    return found;
  }

  decode(inputs: PointInputs): PointDecode {
    const result: PointDecode = { step: inputs.step, fieldCodes: new Map(), mapRows: [] };
    const cls = this.classFor(inputs);
    if (!cls) {
      result.fillReason = 'no-class';
      return result;
    }
    result.cls = cls;
    const alts = cls.steps.get(inputs.step);
    if (!alts) {
      result.fillReason = 'no-step';
      return result;
    }
    const alt = this.pick(alts, inputs);
    if (!alt) {
      result.fillReason = 'no-alternative';
      return result;
    }
    result.alt = alt;
    for (const action of alt.actions) {
      if (!action.value) continue;
      if (action.value.kind === 'code') {
        result.fieldCodes.set(action.signal, action.value.code);
        continue;
      }
      const map = this.machine.maps.get(action.value.map);
      const row = map?.rows.find((r) => rowMatches(map.inputs, r.patterns, inputs));
      if (!row) {
        result.alt = undefined;
        result.fillReason = 'no-map-row';
        result.fieldCodes.clear();
        result.mapRows = [];
        return result;
      }
      result.fieldCodes.set(action.signal, row.code);
      result.mapRows.push({ map: map!, row });
    }
    return result;
  }

  /**
   * Like `decode`, but returns one shared, read-only object for all points whose alternative
   * and decode-map rows are the same (the encoder's hot path), and undefined for fill points.
   */
  decodeShared(inputs: PointInputs): PointDecode | undefined {
    const cls = this.classFor(inputs);
    const alts = cls?.steps.get(inputs.step);
    if (!alts) return undefined;
    const alt = this.pick(alts, inputs);
    if (!alt) return undefined;
    let key = '';
    for (const action of alt.actions) {
      if (action.value?.kind !== 'map') continue;
      const map = this.machine.maps.get(action.value.map);
      const index = map ? map.rows.findIndex((r) => rowMatches(map.inputs, r.patterns, inputs)) : -1;
      if (index < 0) return undefined;
      key += `${index},`;
    }
    let byKey = this.shared.get(alt);
    if (!byKey) this.shared.set(alt, (byKey = new Map()));
    let result = byKey.get(key);
    if (!result) {
      result = this.decode(inputs);
      byKey.set(key, result);
    }
    return result;
  }

  private pick(alts: StepAlt[], inputs: PointInputs): StepAlt | undefined {
    let elseAlt: StepAlt | undefined;
    for (const alt of alts) {
      if (alt.isElse) {
        elseAlt ??= alt;
        continue;
      }
      if (!alt.guard || alt.guard.every((lit) => holds(lit, inputs))) return alt;
    }
    return elseAlt;
  }
}

function rowMatches(mapInputs: DecodeMap['inputs'], patterns: string[], inputs: PointInputs): boolean {
  for (let i = 0; i < mapInputs.length; i++) {
    const v = mapInputs[i].input;
    if (v.kind === 'flag') {
      const f = inputs.flags.get(v.name);
      if (!(patterns[i] === '-' || f === undefined || String(f) === patterns[i])) return false;
    } else if (v.kind === 'ir') {
      if (!matchesBits(patterns[i], (inputs.ir >>> v.lo) & ((1 << (v.hi - v.lo + 1)) - 1))) return false;
    }
  }
  return true;
}

function holds(lit: NonNullable<StepAlt['guard']>[number], inputs: PointInputs): boolean {
  if (lit.input.kind === 'flag') {
    const value = inputs.flags.get(lit.input.name);
    return value === undefined ? false : lit.bits === '-' || lit.bits === String(value);
  }
  if (lit.input.kind !== 'ir') return false;
  return matchesBits(lit.bits, (inputs.ir >>> lit.input.lo) & ((1 << (lit.input.hi - lit.input.lo + 1)) - 1));
}
