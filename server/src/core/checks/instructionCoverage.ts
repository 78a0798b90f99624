// instruction-uncovered: each of the 40 RV32I instructions must reach a class (by opcode) and,
// in every step it reaches (walked from step 0 along its guards until it ends, reach.ts), find a
// row in each decode map that step's line uses. Otherwise its control-store addresses hold the
// fill word and the processor silently does nothing for it.
import { MAJOR_OPCODES, RV32I_INSTRUCTIONS } from '../isa/rv32i';
import { toBinary } from '../model/numbers';
import type { ClassDef, DecodeMap, StepAlt } from '../model/types';
import { type Check } from './context';
import { type Cube, type Scenario, bitsOf, cubeOfBits, instructionCube, intersect, rowMatches, scenarios } from './inputSpace';
import { type ReachedAlt, reachedAlternatives } from './reach';

export const instructionCoverage: Check = {
  codes: ['instruction-uncovered'],
  run(ctx) {
    const machine = ctx.machine;
    if (machine.classes.length === 0 && machine.signals.size === 0) return;
    const anchor = machine.classes[0]?.symbol.span ?? machine.symbols[0]?.span ?? { start: 0, end: 0 };
    // Only a machine that declares `isa rv32i` promises every instruction; a partial table
    // (a sketch, a fault example, a sub-store) is checked for the classes it has.
    for (const major of machine.isa === 'rv32i' ? MAJOR_OPCODES : []) {
      if (machine.classes.some((c) => c.opcode === major.opcode)) continue;
      const names = RV32I_INSTRUCTIONS.filter((s) => s.opcode === major.opcode).map((s) => s.mnemonic);
      ctx.report(
        'instruction-uncovered',
        anchor,
        `no class handles opcode ${toBinary(major.opcode, 7)} (${major.name}): ${names.join(', ')} would run the fill word and do nothing; add \`class ${major.name} opcode=${toBinary(major.opcode, 7)}\``,
      );
    }
    const reported = new Set<string>();
    // Many steps use the same map for the same bits: decide each combination once.
    const uncovered = new Map<string, string | undefined>();
    const firstUncoveredOnce = (map: DecodeMap, cube: Cube, reached: ReachedAlt) => {
      const key = `${map.name}:${cube.mask}:${cube.value}:${reached.flagKey}`;
      if (!uncovered.has(key)) uncovered.set(key, firstUncovered(map, cube, reached.flagValues));
      return uncovered.get(key);
    };
    for (const cls of machine.classes) {
      // Only alternatives that use a decode map can leave an instruction undecoded.
      const usesMap = (alt: StepAlt) => alt.actions.some((a) => a.value?.kind === 'map');
      if (![...cls.steps.values()].flat().some(usesMap)) continue;
      // One walk of the class serves all its instructions: each takes the paths its bits meet.
      const walked = reachedAlternatives(machine, cls, { mask: 0, value: 0 })?.filter((r) => usesMap(r.alt));
      for (const spec of RV32I_INSTRUCTIONS) {
        if (spec.opcode !== cls.opcode) continue;
        // Follow the instruction from step 0 along its guards until it ends: a map in a step
        // it never reaches, or on a line whose guard it never meets, needs no row for it.
        const cube = instructionCube(spec);
        const reached = walked ?? reachedAlternatives(machine, cls, cube) ?? everyAlternative(cls, cube);
        for (const r of reached) {
          const here = intersect(cube, r.path.ir);
          if (!here || !usesMap(r.alt)) continue;
          const alt = r.alt;
          for (const action of alt.actions) {
            if (action.value?.kind !== 'map') continue;
            const map = machine.maps.get(action.value.map);
            if (!map) continue;
            const missing = firstUncoveredOnce(map, here, r);
            if (!missing) continue;
            const key = `${action.span.start}:${spec.mnemonic}`;
            if (reported.has(key)) continue;
            reported.add(key);
            ctx.report(
              'instruction-uncovered',
              action.span,
              `decode map \`${map.name}\` has no row for ${spec.mnemonic} (${missing}), used in step ${alt.step} of class ${cls.name}: its addresses would hold the fill word; add a row for it`,
              [{ span: map.symbol.span, message: `map \`${map.name}\`` }],
            );
          }
        }
      }
    }
  },
};

/**
 * For a class whose guards test too many inputs to walk: every alternative whose
 * instruction-bit terms the instruction can meet, as if every step were reached.
 */
function everyAlternative(cls: ClassDef, cube: Cube): ReachedAlt[] {
  const reached: ReachedAlt[] = [];
  for (const alt of [...cls.steps.values()].flat()) {
    const guardCube = (alt.guard ?? []).reduce<Cube | undefined>((acc, lit) => (acc && lit.input.kind === 'ir' ? intersect(acc, cubeOfBits(lit.input.hi, lit.input.lo, lit.bits)) : acc), cube);
    if (guardCube) reached.push({ alt, path: { ir: guardCube, lastStep: undefined }, flagValues: [], flagKey: '' });
  }
  return reached;
}

/** Describes the first input combination of an instruction that no row of the map matches. */
function firstUncovered(map: DecodeMap, cube: Cube, flagValues: Map<string, number>[]): string | undefined {
  let freeMask = 0;
  const flags: string[] = [];
  for (const input of map.inputs) {
    if (input.input.kind === 'flag') flags.push(input.input.name);
    else if (input.input.kind === 'ir') freeMask |= cubeOfBits(input.input.hi, input.input.lo, '0'.repeat(input.width)).mask;
  }
  const free = bitsOf((freeMask & ~cube.mask) >>> 0);
  for (const scenario of scenarios(cube, free, flags)) {
    // Flag values under which the line never applies need no row.
    if (flagValues.length && !flagValues.some((values) => flags.every((f) => !values.has(f) || values.get(f) === scenario.flags.get(f)))) continue;
    if (map.rows.some((row) => rowMatches(map, row.patterns, scenario))) continue;
    return map.inputs.map((input, i) => `${input.label}=${inputValue(map, i, scenario)}`).join(', ');
  }
  return undefined;
}

function inputValue(map: DecodeMap, index: number, scenario: Scenario): string {
  const input = map.inputs[index].input;
  if (input.kind === 'flag') return String(scenario.flags.get(input.name) ?? '-');
  if (input.kind !== 'ir') return '-';
  let bits = '';
  for (let b = input.hi; b >= input.lo; b--) bits += (scenario.ir.mask >>> b) & 1 ? (scenario.ir.value >>> b) & 1 : '-';
  return bits;
}

