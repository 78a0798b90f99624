// entry-unreachable: with an entry-point decoder (a store whose field feeds another store's
// address), the encoder lays each step's word at the address the table's own field values
// form, but the board forms the address from what the decoder store holds. Where the two
// differ, the step never runs: the processor reads another word there (usually the fill word,
// every strobe idle). The classic case is a fetch phase that does not set the entry field: its
// words stand at the field's idle code, while at step 0 the decoder points wherever the
// previous instruction's entry is, so nothing is ever fetched.
//
// The proof follows the board: for every RV32I instruction of every class, every step it
// reaches (reach.ts: from step 0 along its guards until it ends, step 0 included, so fetch
// runs for every entry the decoder gives), at every combination of the inputs the stores
// carry, each store's address is formed from the step counter, the instruction bits, the flags
// and the ENCODED words of the stores that feed it, and the word there must be the step's word
// on every bit the step cares about.
//
// Deliberately not here: stores that cannot hold their signals (store-ambiguous) and
// instructions no class decodes (instruction-uncovered); illegal encodings run the fill word by
// design and are not walked.
import { type EncodedMachine, type EncodedStore, decodeWord, encodeMachine, formAddress } from '../encode/encoder';
import { type PointInputs, pointInputsInto, universeOf } from '../encode/universe';
import { RV32I_INSTRUCTIONS } from '../isa/rv32i';
import { toBinary, toHex } from '../model/numbers';
import type { ClassDef, Machine, StepAlt, Store } from '../model/types';
import { type Check, useSite } from './context';
import { type Cube, instructionCube, intersects } from './inputSpace';
import { type InstructionPath, instructionPaths, reaches } from './reach';

/** Universe size up to which the proof runs on every edit (as store-ambiguous). */
const maxCheckedBits = 18;

export const entryReach: Check = {
  codes: ['entry-unreachable'],
  run(ctx) {
    const machine = ctx.machine;
    const stores = machine.stores.filter((s) => s.word && s.address);
    const chained = stores.some((s) => s.address!.sources.some((src) => src.input.kind === 'field'));
    if (!chained) return;
    const universe = universeOf(machine);
    if (universe.bits > maxCheckedBits) return;
    const order = evaluationOrder(stores);
    if (!order) return; // Stores feeding each other in a loop: the simulator refuses such a machine.
    const encoded = encodeMachine(machine);
    if (encoded.stores.length !== stores.length) return;
    const walks = new Map<ClassDef, { name: string; cube: Cube; paths: InstructionPath[] }[]>();
    for (const cls of machine.classes) {
      const specs = RV32I_INSTRUCTIONS.filter((s) => s.opcode === cls.opcode);
      const list: { name: string; cube: Cube; paths: InstructionPath[] }[] = [];
      for (const spec of specs) {
        const cube = instructionCube(spec);
        const paths = instructionPaths(machine, cls, cube);
        if (paths) list.push({ name: spec.mnemonic, cube, paths });
      }
      walks.set(cls, list);
    }
    const reported = new Set<number>();
    const inputs: PointInputs = { step: 0, ir: 0, irMask: 0, flags: new Map() };
    const nPoints = 2 ** universe.bits;
    for (let point = 0; point < nPoints; point++) {
      pointInputsInto(universe, point, inputs);
      const decoded = encoded.decoder.decode(inputs);
      if (!decoded.cls || !decoded.alt || reported.has(decoded.alt.span.start)) continue;
      // Which RV32I instruction of the class, if any, runs this step with these bits.
      const here: Cube = { mask: inputs.irMask, value: inputs.ir };
      const instruction = walks.get(decoded.cls)?.find((w) => intersects(w.cube, here) && w.paths.some((p) => intersects(p.ir, here) && reaches(p, decoded.step)));
      if (!instruction) continue;
      const board = boardAddresses(machine, encoded, order, inputs);
      for (const enc of encoded.stores) {
        const wrong = firstWrongSignal(machine, enc, board.get(enc.store.name)!, decoded.alt, decoded.fieldCodes);
        if (!wrong) continue;
        reported.add(decoded.alt.span.start);
        const alt = decoded.alt;
        const owner = alt.phase ? `phase ${alt.phase.name}` : `class ${decoded.cls.name}`;
        const address = board.get(enc.store.name)!;
        const fields = enc.store.address!.sources.filter((s) => s.input.kind === 'field').map((s) => describeField(machine, s.label, decoded.fieldCodes, board.fields));
        const there = enc.origin[address] < 0 ? 'the fill word (every strobe idle)' : `the word of ${describePoint(encoded, enc.origin[address])}`;
        ctx.report(
          'entry-unreachable',
          alt.numberSpan,
          `step ${alt.step} of ${owner} never runs as written for ${instruction.name} (class ${decoded.cls.name}): store ${enc.store.name} is addressed at 0x${toHex(address, Math.ceil(enc.addressBits / 4))} on the board, where ${there} stands, not this step's word (\`${wrong}\` differs)` +
            (fields.length
              ? `; ${fields.join('; ')}. Set the field in this step too (a decode map gives each class its own value), so the step's word stands where the decoder points`
              : '; this store\'s address lines do not tell this step apart from the one whose word stands there'),
          decoded.cls && alt.phase ? useSite(alt, decoded.cls) : undefined,
        );
        break;
      }
    }
  },
};

/** Stores ordered so each comes after the stores whose fields feed its address; undefined on a loop. */
function evaluationOrder(stores: Store[]): Store[] | undefined {
  const holder = new Map<string, Store>();
  for (const store of stores) for (const p of store.word!.placements) holder.set(p.signal, store);
  const order: Store[] = [];
  const state = new Map<Store, 'visiting' | 'done'>();
  const visit = (store: Store): boolean => {
    if (state.get(store) === 'done') return true;
    if (state.get(store) === 'visiting') return false;
    state.set(store, 'visiting');
    for (const source of store.address!.sources) {
      const from = source.input.kind === 'field' ? holder.get(source.input.name) : undefined;
      if (from && from !== store && !visit(from)) return false;
    }
    state.set(store, 'done');
    order.push(store);
    return true;
  };
  return stores.every(visit) ? order : undefined;
}

/** The address each store sees on the board at a point, and the field values the feeding stores output. */
function boardAddresses(machine: Machine, encoded: EncodedMachine, order: Store[], inputs: PointInputs): Map<string, number> & { fields: Map<string, number> } {
  const addresses = new Map<string, number>() as Map<string, number> & { fields: Map<string, number> };
  addresses.fields = new Map();
  for (const store of order) {
    const address = formAddress(machine, store, inputs, (name) => addresses.fields.get(name));
    addresses.set(store.name, address);
    const enc = encoded.stores.find((e) => e.store === store)!;
    for (const [name, code] of decodeWord(machine, enc, address).fields) addresses.fields.set(name, code);
  }
  return addresses;
}

/** The first signal of the store whose value on the board differs from what the step asks. */
function firstWrongSignal(machine: Machine, enc: EncodedStore, address: number, alt: StepAlt, fieldCodes: ReadonlyMap<string, number>): string | undefined {
  const word = decodeWord(machine, enc, address);
  const asserted = new Set(word.asserted);
  const wanted = new Set(alt.actions.filter((a) => !a.value).map((a) => a.signal));
  for (const p of enc.store.word!.placements) {
    const signal = machine.signals.get(p.signal);
    if (!signal) continue;
    if (signal.type === 'strobe') {
      if (asserted.has(signal.name) !== wanted.has(signal.name)) return signal.name;
    } else {
      const code = fieldCodes.get(signal.name);
      if (code !== undefined && word.fields.get(signal.name) !== code) return signal.name;
    }
  }
  return undefined;
}

function describeField(machine: Machine, name: string, tableCodes: ReadonlyMap<string, number>, boardCodes: ReadonlyMap<string, number>): string {
  const field = machine.signals.get(name);
  if (field?.type !== 'field') return `\`${name}\``;
  const valueName = (code: number) => [...field.values.values()].find((v) => v.code === code)?.name;
  const show = (code: number) => `${valueName(code) ?? 'no value'} (${toBinary(code, field.width)})`;
  const board = boardCodes.get(name) ?? field.idle;
  const table = tableCodes.get(name);
  return table === undefined
    ? `the decoder gives \`${name}\` = ${show(board)}, but this step does not set \`${name}\`, so its word stands at the idle code ${show(field.idle)}`
    : `the decoder gives \`${name}\` = ${show(board)}, this step sets ${show(table)}`;
}

function describePoint(encoded: EncodedMachine, point: number): string {
  const inputs = pointInputsInto(encoded.universe, point, { step: 0, ir: 0, irMask: 0, flags: new Map() });
  const decoded = encoded.decoder.decode(inputs);
  return decoded.cls ? `step ${decoded.step} of class ${decoded.cls.name}` : `step ${decoded.step}`;
}
