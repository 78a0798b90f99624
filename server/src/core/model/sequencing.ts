// Where a step goes next on a machine with a sequencer part (a part whose kind `holds step`):
// the sequencer's `always` edge port run from its kind's definition with the codes the step's
// word gives its control and its `field` inputs, and the step number as its state. The checks
// that walk a class (checks/reach.ts, classEnd.ts) ask it which alternatives end the
// instruction (the next step is 0) and which count on, jump or loop back.
//
// Deliberately not here: the control-flow graph (flow/stepGraph.ts), loop bounds, cycle counts, and
// any knowledge of a kind by name: only the `holds step` line and the definition are read.
import { compilePort } from '../parts/behaviour';
import { partSetting, sizeIn } from './buildPart';
import type { Machine, Part, StepAlt } from './types';

interface SequencerPlan {
  part: Part;
  stepState: string;
  stepMask: number;
  /** The next step from the values its names have, or undefined when one is not known here. */
  next: (values: (name: string) => number | undefined) => number | undefined;
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
    // Every assignment to the step state in the ports that act at every closing edge.
    const assigns = part.def.edges.filter((e) => e.always).flatMap((e) => e.assigns).filter((a) => a.target === state.name && !a.index);
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
      next: (values) => {
        // No assignment: the state keeps its value (the step never changes).
        if (!compiled) return values(state.name);
        const inputs: number[] = [];
        for (const name of compiled.inputs) {
          const v = values(name);
          if (v === undefined) return undefined;
          inputs.push(v);
        }
        const out = compiled.run(inputs).map((v) => Number(v));
        // The last assignment whose condition holds wins, as the simulator stores them in order.
        let result = values(state.name);
        let k = 0;
        for (const a of assigns) {
          const value = out[k++];
          const when = a.when ? out[k++] : 1;
          if (when !== 0) result = value;
        }
        return result === undefined ? undefined : result & stepMask;
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

/**
 * The step after `alt` (at step `step`) on a sequencer machine: the sequencer's next state with
 * the codes the word gives its controls and field inputs. Undefined on a machine without one,
 * or when the next step depends on something the word does not fix (a field set by a decode map,
 * a bus).
 */
export function nextStepOf(machine: Machine, alt: StepAlt | undefined, step: number): number | undefined {
  const plan = sequencerPlan(machine);
  if (!plan) return undefined;
  const part = plan.part;
  const codeOf = (field: string): number | undefined => {
    const action = alt?.actions.find((a) => a.signal === field);
    if (action?.value?.kind === 'map') return undefined;
    if (action?.value?.kind === 'code') return action.value.code;
    const signal = machine.signals.get(field);
    return signal?.type === 'field' ? signal.idle : undefined;
  };
  return plan.next((name) => {
    if (name === plan.stepState) return step;
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
  });
}
