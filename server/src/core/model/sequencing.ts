// Where a step goes next on a machine with a sequencer part (a part whose kind `holds step`):
// the sequencer's `always` edge ports run from its kind's definition with the codes the step's
// word gives its controls and its `field` inputs, the step number as its state and, where the
// kind `holds return` registers, their values. The checks that walk a class (checks/reach.ts,
// classEnd.ts) ask it which alternatives end the instruction (the next step is 0) and which
// count on, jump or loop back; the step graph (flow/stepGraph.ts) asks it for calls and returns.
//
// Calls and returns are found from the definition, never from a control's value names: a move
// *returns* when its next step reads a return register (changing the register's value changes
// the next step), and *calls* when it writes a return register with a value computed from the
// step (the step after the call). A register's value left by an earlier instruction is not
// known: a next step read from it is a return no call of this instruction saved.
//
// Deliberately not here: the control-flow graph (flow/stepGraph.ts), loop bounds, cycle counts, and
// any knowledge of a kind by name: only the `holds step` / `holds return` lines and the definition are read.
import { compilePort } from '../parts/behaviour';
import { partSetting, sizeIn } from './buildPart';
import type { Machine, Part, StepAlt } from './types';

interface SequencerPlan {
  part: Part;
  stepState: string;
  stepMask: number;
  /** The return registers, the top of the stack first (empty: the sequencer cannot call). */
  returns: string[];
  /** The next step and the next value of each return register, from the values its names have; undefined when a name's value is not known here. */
  next: (values: (name: string) => number | undefined) => { step: number; returns: number[] } | undefined;
}

const plans = new WeakMap<Machine, SequencerPlan | null>();

/** The sequencer of the machine, compiled once per model; undefined without one. */
function sequencerPlan(machine: Machine): SequencerPlan | undefined {
  const cached = plans.get(machine);
  if (cached !== undefined) return cached ?? undefined;
  let plan: SequencerPlan | null = null;
  const part = machine.sequencer ? machine.parts.get(machine.sequencer) : undefined;
  const holds = part?.def.holds.find((h) => h.role === 'step');
  const state = holds ? part!.def.states.find((s) => s.name === holds.state) : undefined;
  if (part && holds && state) {
    const width = sizeIn(part, state.width);
    const stepMask = width >= 31 ? 0x7fffffff : 2 ** width - 1;
    const returns = part.def.holds.find((h) => h.role === 'return')?.stack ?? [];
    // Every assignment to the step state and to the return registers in the ports that act at
    // every closing edge, in order: the last one whose condition holds wins, as the simulator
    // stores them.
    const targets = [state.name, ...returns];
    const assigns = part.def.edges.filter((e) => e.always).flatMap((e) => e.assigns).filter((a) => targets.includes(a.target) && !a.index);
    const texts = assigns.flatMap((a) => [{ text: a.expr, width }, ...(a.when ? [{ text: a.when, width: 1 }] : [])]);
    let compiled: ReturnType<typeof compilePort> | undefined;
    try {
      compiled = texts.length ? compilePort(part.def, partSetting(machine, part), texts) : undefined;
    } catch {
      compiled = undefined; // a definition with its own reported problems: nothing is known of the next step
    }
    plan = {
      part,
      stepState: state.name,
      stepMask,
      returns,
      next: (values) => {
        const current = targets.map((t) => values(t));
        if (current.some((v) => v === undefined)) return undefined;
        const result = current as number[];
        // No assignment: the states keep their values.
        if (compiled) {
          // A name whose value is not known here (an input from a bus) matters only if the
          // result changes with it: run with it all zeros and all ones, and compare.
          const known = compiled.inputs.map((name) => values(name));
          const runWith = (fill: number) => {
            const out = compiled.run(known.map((v) => v ?? fill)).map((v) => Number(v));
            const next = [...result];
            let k = 0;
            for (const a of assigns) {
              const value = out[k++];
              const when = a.when ? out[k++] : 1;
              if (when !== 0) next[targets.indexOf(a.target)] = value & stepMask;
            }
            return next;
          };
          const low = runWith(0);
          if (known.some((v) => v === undefined) && runWith(0xffffffff).some((v, i) => v !== low[i])) return undefined;
          result.splice(0, result.length, ...low);
        }
        return { step: result[0] & stepMask, returns: result.slice(1) };
      },
    };
  }
  plans.set(machine, plan);
  return plan ?? undefined;
}

/** Whether the machine's step counter is a sequencer part (else it is the implicit counter with `end`). */
export function hasSequencer(machine: Machine): boolean {
  return machine.sequencer !== undefined;
}

/** The sequencer's return registers, the top of the stack first: empty when it cannot call. */
export function returnRegisters(machine: Machine): readonly string[] {
  return sequencerPlan(machine)?.returns ?? [];
}

/**
 * What the control flow knows of the return registers during one instruction: each register's
 * value (undefined: left by an earlier instruction, not known) and the step of the call that
 * saved it while no return has used it (undefined: none, or already returned to).
 */
export interface ReturnContext {
  values: (number | undefined)[];
  calls: (number | undefined)[];
  /** A call on the way here overwrote an open call's saved step (what follows is a consequence of that). */
  overflowed?: boolean;
}

/** At step 0 nothing is known of the return registers and no call is open. */
export function startContext(machine: Machine): ReturnContext {
  const n = returnRegisters(machine).length;
  return { values: new Array(n).fill(undefined), calls: new Array(n).fill(undefined) };
}

/** A text key of a context ('' when nothing is known and no call is open, as at step 0). */
export function contextKey(context: ReturnContext): string {
  if (context.values.every((v) => v === undefined) && context.calls.every((c) => c === undefined) && !context.overflowed) return '';
  return context.values.map((v, i) => `${v ?? '?'}/${context.calls[i] ?? '-'}`).join(' ') + (context.overflowed ? ' !' : '');
}

/** One move of the sequencer at a closing edge: the next step and what it does to the return registers. */
export interface SequencerMove {
  /** The next step; undefined when the word does not fix it (a sequencer input from a bus, a decode map no code is given for) or it is read from a return register no call of this instruction set. */
  to: number | undefined;
  /** The return registers after the edge. */
  context: ReturnContext;
  /** The next step is read from a return register: the step of the call that saved it, or null when none of this instruction did (a return without a call). */
  returnOf?: number | null;
  /** The move saved a return step (a call). */
  calls?: boolean;
  /** Steps of open calls whose saved step this move overwrote before a return used it (more nested calls than return registers). */
  lost: number[];
}

/** The fields of the word the sequencer reads: those driving its controls and those its `field` inputs read. */
export function sequencerFields(machine: Machine): ReadonlySet<string> {
  const part = sequencerPlan(machine)?.part;
  if (!part) return new Set();
  return new Set([...part.controlFields.values(), ...[...part.inputs.values()].flatMap((i) => (i.from === 'field' ? [i.name] : []))]);
}

/**
 * The sequencer's move after `alt` (at step `step`; undefined: the fill word), from the return
 * registers `context` (default: as at step 0). A field the word sets from a decode map has the
 * code `mapCode` gives (undefined: not known). Undefined on a machine without a sequencer.
 */
export function sequencerMove(machine: Machine, alt: StepAlt | undefined, step: number, context?: ReturnContext, mapCode?: (map: string) => number | undefined): SequencerMove | undefined {
  const plan = sequencerPlan(machine);
  if (!plan) return undefined;
  const ctx = context ?? startContext(machine);
  const part = plan.part;
  const codeOf = (field: string): number | undefined => {
    const action = alt?.actions.find((a) => a.signal === field);
    if (action?.value?.kind === 'map') return mapCode?.(action.value.map);
    if (action?.value?.kind === 'code') return action.value.code;
    const signal = machine.signals.get(field);
    return signal?.type === 'field' ? signal.idle : undefined;
  };
  const fixed = (name: string): number | undefined => {
    const input = part.inputs.get(name);
    if (input) return input.from === 'field' ? codeOf(input.name) : undefined;
    const control = part.def.controls.find((c) => c.name === name);
    if (control) {
      const field = part.controlFields.get(name);
      if (field) return codeOf(field);
      return control.default !== undefined ? control.values.indexOf(control.default) : 0;
    }
    const setting = part.def.settings.find((s) => s.name === name);
    if (setting?.type === 'choice') return setting.choices.indexOf(String(part.settings.get(name)));
    return undefined;
  };
  // The run with each return register's value (a stand-in where not known), and with one
  // register or the step changed: what changes tells what the move reads (see the header).
  const mask = plan.stepMask;
  const base = ctx.values.map((v) => v ?? 0);
  const run = (returns: number[], stepValue = step) =>
    plan.next((name) => {
      if (name === plan.stepState) return stepValue;
      const r = plan.returns.indexOf(name);
      if (r >= 0) return returns[r];
      return fixed(name);
    });
  const moved = run(base);
  if (!moved) return { to: undefined, context: ctx, lost: [] };
  if (!plan.returns.length) return { to: moved.step, context: ctx, lost: [] };
  const flipped = base.map((v) => v ^ mask);
  const changedRuns = plan.returns.map((_, i) => run(base.map((v, j) => (j === i ? flipped[i] : v)))!);
  const stepRun = run(base, step ^ mask)!;
  // Which register the next step reads, and for each register after the edge which one it copies (or none).
  const readFrom = changedRuns.findIndex((r) => r.step !== moved.step);
  const values: (number | undefined)[] = [];
  const calls: (number | undefined)[] = [];
  let saved = false;
  moved.returns.forEach((value, j) => {
    const copies = changedRuns.findIndex((r, i) => value === base[i] && r.returns[j] === flipped[i]);
    if (copies >= 0) {
      values.push(ctx.values[copies]);
      calls.push(ctx.calls[copies]);
    } else if (changedRuns.some((r) => r.returns[j] !== value)) {
      values.push(undefined); // computed from a register in some other way: not followed
      calls.push(undefined);
    } else {
      values.push(value);
      // A value computed from the step is a saved return step: a call.
      const isCall = stepRun.returns[j] !== value;
      calls.push(isCall ? step : undefined);
      saved ||= isCall;
    }
  });
  const move: SequencerMove = { to: moved.step, context: { values, calls }, lost: [] };
  if (saved) move.calls = true;
  if (readFrom >= 0) {
    const call = ctx.calls[readFrom];
    move.returnOf = call ?? null;
    if (ctx.values[readFrom] === undefined) move.to = undefined;
    // The return uses the saved step: the call is closed wherever its step is still held.
    if (call !== undefined) move.context.calls = move.context.calls.map((c) => (c === call ? undefined : c));
  }
  const open = new Set(ctx.calls.filter((c): c is number => c !== undefined));
  if (move.returnOf != null) open.delete(move.returnOf);
  for (const c of move.context.calls) if (c !== undefined) open.delete(c);
  move.lost = [...open];
  if (ctx.overflowed || move.lost.length) move.context.overflowed = true;
  return move;
}

/**
 * The step after `alt` (at step `step`) on a sequencer machine, as at the start of an
 * instruction: the sequencer's next state with the codes the word gives its controls and field
 * inputs. Undefined on a machine without one, or when the next step depends on something the
 * word does not fix (a field set by a decode map, a bus, a return register).
 */
export function nextStepOf(machine: Machine, alt: StepAlt | undefined, step: number): number | undefined {
  const move = sequencerMove(machine, alt, step);
  return move?.returnOf !== undefined ? undefined : move?.to;
}
