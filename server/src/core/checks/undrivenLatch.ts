// undriven-latch / stale-latch: a part loads (clock, memory write, comparator clock) from a bus
// that nothing drives in that step, directly or through the ALU whose operand bus is undriven.
// Without keepers the bus floats and the part stores noise (error); with keepers it stores the
// last value some earlier step drove, which is rarely what was meant (warning).
import type { Action, AluPart, Machine, StepAlt } from '../model/types';
import { type Check, type CheckContext, driversByBus, strobeOf, writtenAlternatives } from './context';

export const undrivenLatch: Check = {
  codes: ['undriven-latch', 'stale-latch'],
  run(ctx) {
    for (const { alt, owner } of writtenAlternatives(ctx.machine)) {
      const drivers = driversByBus(ctx.machine, alt);
      let reported: Set<string> | undefined;
      // `what` is a function so the message is only written when there is a problem.
      const need = (bus: string, action: Action, what: () => string) => {
        const problem = undrivenReason(ctx.machine, alt, drivers, bus);
        if (!problem) return;
        const key = `${action.signal}:${problem.bus}`;
        reported ??= new Set();
        if (reported.has(key)) return;
        reported.add(key);
        report(ctx, alt, owner, action, what(), problem);
      };
      for (const action of alt.actions) {
        const strobe = strobeOf(ctx.machine, action);
        if (!strobe) continue;
        const part = strobe.part ? ctx.machine.parts.get(strobe.part) : undefined;
        if ((strobe.kind === 'clock' || strobe.kind === 'write') && strobe.bus) {
          need(strobe.bus, action, () => (strobe.kind === 'write' ? `\`${action.signal}\` writes bus \`${strobe.bus}\` to memory` : `\`${action.signal}\` loads \`${strobe.part}\` from bus \`${strobe.bus}\``));
        }
        if (strobe.kind === 'clock' && part?.kind === 'compare') {
          need(part.a, action, () => `\`${action.signal}\` latches the comparison of \`${part.a}\` and \`${part.b}\``);
          need(part.b, action, () => `\`${action.signal}\` latches the comparison of \`${part.a}\` and \`${part.b}\``);
        }
        if ((strobe.kind === 'read' || strobe.kind === 'write') && part?.kind === 'memory' && part.addressFrom === 'bus') {
          need(part.address, action, () => `\`${action.signal}\` takes its memory address from bus \`${part.address}\``);
        }
      }
    }
  },
};

interface Undriven {
  bus: string;
  keeper: boolean;
  /** Set when the bus is driven by the ALU but the ALU's operand bus is not. */
  via?: string;
}

function undrivenReason(machine: Machine, alt: StepAlt, drivers: Map<string, Action[]>, bus: string): Undriven | undefined {
  const busInfo = machine.buses.get(bus);
  const driving = drivers.get(bus);
  if (!driving || driving.length === 0) return { bus, keeper: !!busInfo?.keeper };
  for (const action of driving) {
    const strobe = strobeOf(machine, action);
    const part = strobe?.part ? machine.parts.get(strobe.part) : undefined;
    if (part?.kind !== 'alu') continue;
    for (const operand of aluOperandsUsed(machine, alt, part)) {
      if (!drivers.get(operand)?.length) return { bus: operand, keeper: !!machine.buses.get(operand)?.keeper, via: `the ALU output \`${part.name}\` on \`${bus}\`` };
    }
  }
  return undefined;
}

/** Operand buses the ALU's function in this step reads: pass-throughs read one, the rest both. */
function aluOperandsUsed(machine: Machine, alt: StepAlt, alu: AluPart): string[] {
  if (!alu.controlField) return [alu.a, alu.b];
  const field = machine.signals.get(alu.controlField);
  if (field?.type !== 'field') return [alu.a, alu.b];
  const action = alt.actions.find((a) => a.signal === field.name && a.value);
  let ops: string[];
  if (!action) ops = [...field.values.values()].filter((v) => v.code === field.idle).map((v) => v.name);
  else if (action.value!.kind === 'code') ops = [action.value!.name];
  else ops = (machine.maps.get(action.value!.map)?.rows ?? []).map((r) => r.value);
  const used = new Set<string>();
  for (const op of ops.length ? ops : ['add']) {
    if (op !== 'passb') used.add(alu.a);
    if (op !== 'passa') used.add(alu.b);
  }
  return [...used];
}

function report(ctx: CheckContext, alt: StepAlt, owner: string, action: Action, what: string, problem: Undriven): void {
  const where = `step ${alt.step} of ${owner}`;
  const subject = problem.via ? `${what}, which is ${problem.via} computed from bus \`${problem.bus}\`` : what;
  if (problem.keeper) {
    ctx.report(
      'stale-latch',
      action.span,
      `${subject}, but nothing drives \`${problem.bus}\` in ${where}: its keepers hold the value of an earlier step, which is stored instead; drive \`${problem.bus}\` in this step`,
    );
  } else {
    ctx.report(
      'undriven-latch',
      action.span,
      `${subject}, but nothing drives \`${problem.bus}\` in ${where} and it has no keepers: the lines float and noise is stored; enable a driver on \`${problem.bus}\` in this step`,
    );
  }
}
