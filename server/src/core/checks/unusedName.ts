// unused-name: declarations nothing uses: strobes and fields no step asserts, buses no strobe
// or part touches, parts nothing is wired to, maps and phases never used, flags never tested.
// Often a forgotten step or a misspelling. The fix removes an unused strobe with its placement.
import type { SymbolInfo } from '../model/types';
import { inputWiring, kindOf } from '../model/partFacts';
import { type Check, writtenAlternatives } from './context';
import { removeLinesEdit } from './fixes';

export const unusedName: Check = {
  codes: ['unused-name'],
  run(ctx) {
    const machine = ctx.machine;
    // Symbols are shared objects: a reference holds the very SymbolInfo its declaration made.
    const used = new Set<SymbolInfo>();
    for (const ref of machine.references) used.add(ref.symbol);
    const usedSignals = new Set<string>();
    // Every step line as written (each phase once, used or not): the same signals as the
    // classes with their phases expanded plus all phases, without walking the expanded copies.
    for (const { alt } of writtenAlternatives(machine)) for (const a of alt.actions) usedSignals.add(a.signal);
    for (const map of machine.maps.values()) if (map.output && usedSignals.has(map.output)) usedSignals.add(map.output);
    // A number field wired to a part's `field` input (a sequencer's jump target) is read by that part.
    for (const part of machine.parts.values()) for (const source of part.inputs.values()) if (source.from === 'field') usedSignals.add(source.name);
    const usedBuses = new Set<string>();
    const usedParts = new Set<string>();
    for (const signal of machine.signals.values()) {
      if (signal.type === 'strobe') {
        if (signal.bus) usedBuses.add(signal.bus);
        if (signal.part) usedParts.add(signal.part);
      } else if (signal.target) usedParts.add(signal.target);
    }
    for (const part of machine.parts.values()) {
      // A part uses the buses and parts its definition's inputs are wired to.
      const wired = inputWiring(machine, part);
      for (const bus of wired.buses) usedBuses.add(bus);
      for (const name of wired.parts) usedParts.add(name);
      // The instruction register feeds the address lines; a register array (the register file)
      // holds the program's registers, which the run's environment reads and writes.
      if (part.name === machine.instructionRegister || kindOf(machine, part).states.some((s) => typeof s.count === 'object')) usedParts.add(part.name);
    }
    for (const flag of machine.flags.values()) usedParts.add(flag.part);
    for (const c of machine.connections) {
      if (c.part) usedParts.add(c.part);
      if (c.bus) usedBuses.add(c.bus);
    }
    const warn = (name: string, span: typeof machine.symbols[number]['span'], what: string, fixes?: Parameters<typeof ctx.report>[4]) =>
      ctx.report('unused-name', span, `${what} \`${name}\` is never used`, undefined, fixes);

    for (const signal of machine.signals.values()) {
      if (usedSignals.has(signal.name)) continue;
      const placement = machine.stores.flatMap((s) => s.word?.placements ?? []).find((p) => p.signal === signal.name);
      const edits = [removeLinesEdit(ctx.text, signal.symbol.declSpan)];
      // Remove the placement too, but only when it stands alone on its line.
      if (placement && lineHolds(ctx.text, placement.span)) edits.push(removeLinesEdit(ctx.text, placement.span));
      else if (placement) edits.push({ span: placement.span, newText: '' });
      warn(signal.name, signal.symbol.span, `${signal.type === 'strobe' ? 'strobe' : 'field'}`, [{ title: `Remove the unused ${signal.type} \`${signal.name}\``, edits }]);
    }
    for (const bus of machine.buses.values()) if (!usedBuses.has(bus.name)) warn(bus.name, bus.symbol.span, 'bus');
    for (const part of machine.parts.values()) if (!usedParts.has(part.name)) warn(part.name, part.symbol.span, 'part');
    for (const map of machine.maps.values()) if (!used.has(map.symbol)) warn(map.name, map.symbol.span, 'map');
    for (const phase of machine.phases.values()) if (!used.has(phase.symbol)) warn(phase.name, phase.symbol.span, 'phase');
    for (const flag of machine.flags.values()) if (!used.has(flag.symbol)) warn(flag.name, flag.symbol.span, 'flag');
  },
};

/** True if the span is the only thing on its line (besides spaces and a comment). */
function lineHolds(text: string, at: { start: number; end: number }): boolean {
  let start = at.start;
  while (start > 0 && text[start - 1] !== '\n' && text[start - 1] !== '\r') start--;
  let end = at.end;
  while (end < text.length && text[end] !== '\n' && text[end] !== '\r') end++;
  return /^\s*$/.test(text.slice(start, at.start)) && /^\s*(#.*)?$/.test(text.slice(at.end, end));
}
