// Builds decode maps, phases and classes: step lines with their guards and actions, phases
// expanded where classes `use` them. Resolves strobe, field, value and map names in actions.
import type * as A from '../syntax/ast';
import type { Span } from '../text/span';
import { closest } from '../text/suggest';
import type { BuildContext } from './build';
import { parseBits, parseNumber } from './numbers';
import { sequencerMove } from './sequencing';
import type * as M from './types';
import { inputWidth } from './vocabulary';

export function buildBodies(ctx: BuildContext, tree: A.FileNode): void {
  for (const decl of tree.decls) if (decl.kind === 'map') buildMap(ctx, decl);
  for (const decl of tree.decls) if (decl.kind === 'phase') buildPhase(ctx, decl);
  for (const decl of tree.decls) if (decl.kind === 'class') buildClass(ctx, decl);
}

function owned(ctx: BuildContext, ns: 'map' | 'phase' | 'class', name: A.Name | undefined, span: Span): boolean {
  return !!name && ctx.lookup(ns, name.text)?.declSpan === span;
}

function buildMap(ctx: BuildContext, decl: A.MapDecl): void {
  if (!owned(ctx, 'map', decl.name, decl.span)) return;
  const name = decl.name!.text;
  const map: M.DecodeMap = { name, inputs: [], rows: [], description: decl.description?.value, symbol: ctx.lookup('map', name)! };
  let inputsOk = decl.inputs.length > 0;
  for (const input of decl.inputs) {
    const resolved = ctx.input(input, {});
    if (!resolved || resolved.input.kind === 'field' || resolved.input.kind === 'step') {
      inputsOk = false;
      continue;
    }
    map.inputs.push({ input: resolved.input, label: resolved.label, width: inputWidth(resolved.input), span: input.span });
  }
  let field: M.Field | undefined;
  if (decl.output) {
    const sym = ctx.resolve('signal', decl.output.name, 'field', (s) => s.kind === 'field');
    if (!sym && ctx.lookup('signal', decl.output.name.text)) {
      ctx.report('wrong-wiring', decl.output.span, `a map sets a field; \`${decl.output.name.text}\` is a one-bit strobe`);
    }
    const signal = sym ? ctx.machine.signals.get(sym.name) : undefined;
    if (signal?.type === 'field') {
      field = signal;
      map.output = field.name;
    }
  } else if (decl.name) {
    ctx.report('wrong-wiring', decl.name.span, `say which field the map sets, e.g. \`map ${name} (funct3) -> alu.fn\``);
  }
  if (inputsOk) {
    for (const row of decl.rows) {
      const patterns: string[] = [];
      let ok = true;
      row.patterns.forEach((lit, i) => {
        const input = map.inputs[i];
        const bits = parseBits(lit.text);
        const expanded = bits === '-' && input ? '-'.repeat(input.width) : bits;
        if (!input) return;
        if (expanded === undefined || expanded.length !== input.width) {
          ctx.report('bad-number', lit.span, `\`${input.label}\` has ${input.width} bit(s): write ${input.width} of 0, 1 or - (any), e.g. \`${'0'.repeat(input.width)}\``);
          ok = false;
          return;
        }
        patterns.push(expanded);
      });
      if (!ok || !field) continue;
      if (field.numeric || row.number) {
        // A number field's map gives numbers (a jump table of step numbers).
        const max = 2 ** field.width - 1;
        if (!field.numeric || !row.number) {
          const at = row.number ?? row.value!;
          ctx.report('wrong-wiring', at.span, field.numeric ? `\`${field.name}\` is a number field: give the row a number from 0 to ${max}` : `\`${field.name}\` has named values: give the row one of them (${[...field.values.keys()].join(', ')})`);
          continue;
        }
        const code = parseNumber(row.number.text);
        if (code === undefined || code > max) {
          ctx.report('bad-number', row.number.span, code === undefined ? `\`${row.number.text}\` is not a number; write it in decimal, or with 0x (hex) or 0b (binary)` : `\`${field.name}\` has ${field.width} bit(s): a number from 0 to ${max}; ${code} does not fit`);
          continue;
        }
        map.rows.push({ patterns, value: String(code), code, span: row.span });
        continue;
      }
      if (!row.value) continue;
      const value = field.values.get(row.value.text);
      if (!value) {
        ctx.undefinedName(row.value, `value of \`${field.name}\``, [...field.values.keys()]);
        continue;
      }
      ctx.reference(row.value.span, value.symbol);
      map.rows.push({ patterns, value: value.name, code: value.code, span: row.span });
    }
  }
  ctx.machine.maps.set(name, map);
}

function buildPhase(ctx: BuildContext, decl: A.PhaseDecl): void {
  if (!owned(ctx, 'phase', decl.name, decl.span)) return;
  const phase: M.Phase = { name: decl.name!.text, description: decl.description?.value, steps: [], symbol: ctx.lookup('phase', decl.name!.text)! };
  for (const item of decl.body) {
    if (item.kind === 'step') {
      const alt = buildStep(ctx, item, true);
      if (alt) phase.steps.push(alt);
    }
  }
  ctx.machine.phases.set(phase.name, phase);
}

function buildClass(ctx: BuildContext, decl: A.ClassDecl): void {
  if (!owned(ctx, 'class', decl.name, decl.span)) return;
  const cls: M.ClassDef = { name: decl.name!.text, description: decl.description?.value, steps: new Map(), symbol: ctx.lookup('class', decl.name!.text)! };
  for (const option of decl.options) {
    if (option.key.text !== 'opcode') {
      ctx.report('unknown-kind', option.key.span, `a class has no setting \`${option.key.text}\`; it takes \`opcode=\` and the seven opcode bits`);
      continue;
    }
    const text = option.value?.text ?? '';
    let opcode: number | undefined;
    if (/^[01]{7}$/.test(text)) opcode = parseInt(text, 2);
    else if (/^0x[0-9a-f]{1,2}$/i.test(text)) opcode = parseInt(text.slice(2), 16);
    if (opcode === undefined || opcode > 0x7f) {
      ctx.report('bad-number', option.value?.span ?? option.span, 'write the opcode as seven bits, e.g. `opcode=0110011` (instruction bits 6..0)');
      continue;
    }
    cls.opcode = opcode;
    cls.opcodeSpan = option.value!.span;
  }
  const add = (alt: M.StepAlt) => {
    const list = cls.steps.get(alt.step);
    if (list) list.push(alt);
    else cls.steps.set(alt.step, [alt]);
  };
  let nextStep = 0;
  for (const item of decl.body) {
    if (item.kind === 'use') {
      if (!item.phase) continue;
      const sym = ctx.resolve('phase', item.phase, 'phase');
      const phase = sym ? ctx.machine.phases.get(sym.name) : undefined;
      if (!phase) continue;
      const at = item.at ? ctx.number(item.at, 'a step number', 0, 1023) : nextStep;
      if (at === undefined) continue;
      let last = at - 1;
      const origin = { name: phase.name, useSpan: item.span };
      for (const step of phase.steps) {
        add({ ...step, step: at + step.step, phase: origin });
        last = Math.max(last, at + step.step);
      }
      nextStep = Math.max(nextStep, last + 1);
    } else {
      const alt = buildStep(ctx, item, false);
      if (!alt) continue;
      add(alt);
      nextStep = Math.max(nextStep, alt.step + 1);
    }
  }
  ctx.machine.classes.push(cls);
}

function buildStep(ctx: BuildContext, line: A.StepLine, inPhase: boolean): M.StepAlt | undefined {
  const step = ctx.number(line.number, 'a step number', 0, 1023);
  if (step === undefined) return undefined;
  const alt: M.StepAlt = { step, guard: null, isElse: false, actions: [], span: line.span, numberSpan: line.number.span };
  if (line.guard?.elseKeyword) alt.isElse = true;
  else if (line.guard) alt.guard = buildGuard(ctx, line.guard);
  for (const action of line.actions) {
    const sugar = sequencerAction(ctx, action, inPhase ? undefined : step);
    const built = sugar === undefined ? buildAction(ctx, action) : sugar;
    if (Array.isArray(built)) alt.actions.push(...built);
    else if (built) alt.actions.push(built);
  }
  return alt;
}

function buildGuard(ctx: BuildContext, guard: A.GuardNode): M.GuardLiteral[] {
  const literals: M.GuardLiteral[] = [];
  for (const term of guard.terms) {
    const resolved = ctx.input(term.input, {});
    if (!resolved || resolved.input.kind === 'field' || resolved.input.kind === 'step') continue;
    const width = inputWidth(resolved.input);
    let bits: string | undefined;
    if (term.pattern) {
      bits = parseBits(term.pattern.text);
      if (bits === '-') bits = '-'.repeat(width);
      if (bits === undefined || bits.length !== width) {
        ctx.report('bad-number', term.pattern.span, `\`${resolved.label}\` has ${width} bit(s): write ${width} of 0, 1 or - (any)`);
        continue;
      }
      if (term.negated) {
        if (width !== 1) {
          ctx.report('bad-number', term.negated, `\`!\` tests a one-bit input; for \`${resolved.label}\` write the bits you want instead`);
          continue;
        }
        bits = bits === '1' ? '0' : bits === '0' ? '1' : bits;
      }
    } else if (width === 1) {
      bits = term.negated ? '0' : '1';
    } else {
      ctx.report('bad-number', term.span, `\`${resolved.label}\` has ${width} bits: compare it with a pattern, e.g. \`${resolved.label}=${'0'.repeat(width)}\``);
      continue;
    }
    literals.push({ input: resolved.input, label: resolved.label, bits, span: term.span });
  }
  return literals;
}

/** The step sugar's words and the sequencer op value each stands for. */
const SEQUENCER_SUGAR: Record<string, string> = { goto: 'load', wait: 'hold', end: 'clear', call: 'call', return: 'return' };

/**
 * The step sugar of a machine with a sequencer part (`holds step`): `goto N` sets the
 * sequencer's op field to `load` and its target field (the `field` input's) to N; `wait` sets
 * the op to `hold`; `end` sets it to `clear`; `call N` sets it to `call` and the target to N;
 * `return` sets it to `return`. The fields are the ones wired to the part holding
 * the step: the field driving its control that has those values, and the field its `field`
 * input reads. Returns undefined when the action is not sugar here (a declared strobe or
 * field of that name, or a machine without a sequencer): then it is an ordinary action.
 */
function sequencerAction(ctx: BuildContext, action: A.ActionNode, step: number | undefined): M.Action[] | null | undefined {
  const word = action.target.name.text;
  const sugar = Object.hasOwn(SEQUENCER_SUGAR, word) ? SEQUENCER_SUGAR[word] : undefined;
  if (!sugar || action.target.index || action.equals) return undefined;
  const jumps = word === 'goto' || word === 'call';
  if (ctx.lookup('signal', word)) return undefined;
  const seq = ctx.machine.sequencer ? ctx.machine.parts.get(ctx.machine.sequencer) : undefined;
  if (!seq) {
    if (jumps || word === 'return') {
      ctx.report('wrong-wiring', action.span, `\`${word}\` ${word === 'goto' ? 'jumps' : word === 'call' ? 'calls a routine with' : 'returns with'} the sequencer, and this machine has none (a part whose kind \`holds step\`, e.g. \`part seq ${word === 'goto' ? 'sequencer' : 'callseq'} 4 target=next\`)`);
      return null;
    }
    return undefined;
  }
  const control = seq.def.controls.find((c) => c.values.includes(sugar));
  // A next-address sequencer has no op to set: the step is the number a field gives.
  if (!control && word !== 'call' && word !== 'return') return nextFieldAction(ctx, seq, action, word, step);
  const opField = control ? seq.controlFields.get(control.name) : undefined;
  const op = opField ? ctx.machine.signals.get(opField) : undefined;
  const code = op?.type === 'field' ? op.values.get(sugar)?.code : undefined;
  if (!op || code === undefined) {
    ctx.report('wrong-wiring', action.target.span, `\`${word}\` sets the sequencer \`${seq.name}\`'s op to \`${sugar}\`, but ${op ? `its field \`${op.name}\` has no value \`${sugar}\`` : `no field drives ${control ? `its control \`${control.name}\`` : 'a control of it with that value'}`}; declare one, e.g. \`field seqop 2 -> ${seq.name}${control && seq.def.controls.length > 1 ? `.${control.name}` : ''} { count=0 load=1 hold=2 clear=3 }\``);
    return null;
  }
  const actions: M.Action[] = [{ signal: op.name, value: { kind: 'code', name: sugar, code }, span: action.span }];
  if (jumps) {
    const input = seq.def.inputs.find((i) => i.wiring === 'field');
    const source = input ? seq.inputs.get(input.name) : undefined;
    const target = source?.from === 'field' ? ctx.machine.signals.get(source.name) : undefined;
    if (target?.type !== 'field' || !target.numeric) {
      ctx.report('wrong-wiring', action.target.span, `\`${word}\` needs the sequencer \`${seq.name}\`'s target: a number field wired to its \`field\` input`);
      return null;
    }
    const number = numberAction(ctx, target, { ...action, equals: action.span });
    if (!number) return null;
    actions.push(number);
  }
  return actions;
}

/**
 * The step sugar on a sequencer with no control for it (a next-address one, the library's
 * `nextstep`): the number field whose code is the next step when the word sets nothing else,
 * as its definition computes (tried with two numbers), set to N (`goto N`), 0 (`end`) or the
 * step's own number (`wait`, in a class's own step; a phase's step numbers move with `use`).
 */
function nextFieldAction(ctx: BuildContext, seq: M.Part, action: A.ActionNode, word: string, step: number | undefined): M.Action[] | null {
  const machine = ctx.machine;
  const fields = [...seq.inputs.values()].flatMap((i) => (i.from === 'field' ? [machine.signals.get(i.name)] : [])).filter((f): f is M.Field => f?.type === 'field' && f.numeric === true);
  const gives = (field: M.Field) =>
    [1, 2].every((n) => sequencerMove(machine, { step: 0, guard: null, isElse: false, actions: [{ signal: field.name, value: { kind: 'code', name: String(n), code: n }, span: action.span }], span: action.span, numberSpan: action.span }, 0)?.to === n);
  const field = fields.find(gives);
  if (!field) {
    ctx.report('wrong-wiring', action.target.span, `\`${word}\` needs a way to set the sequencer \`${seq.name}\`'s next step: an op control with the value \`${SEQUENCER_SUGAR[word]}\`, or a number field that alone gives the next step; write the fields instead`);
    return null;
  }
  if (word === 'wait' && step === undefined) {
    ctx.report('wrong-wiring', action.target.span, `\`wait\` on the next-address sequencer \`${seq.name}\` sets \`${field.name}\` to the step's own number, which a phase does not know (\`use\` moves it); write \`${field.name}=N\` in the phase, or the wait in the class`);
    return null;
  }
  if (word === 'goto') {
    const number = numberAction(ctx, field, { ...action, equals: action.span });
    return number ? [number] : null;
  }
  const code = word === 'end' ? 0 : step!;
  return [{ signal: field.name, value: { kind: 'code', name: String(code), code }, span: action.span }];
}

function buildAction(ctx: BuildContext, action: A.ActionNode): M.Action | undefined {
  const target = action.target.name;
  const sym = ctx.lookup('signal', target.text);
  if (!sym || (sym.kind !== 'strobe' && sym.kind !== 'field')) {
    ctx.undefinedName(target, 'strobe or field', [...ctx.machine.signals.keys()]);
    return undefined;
  }
  ctx.reference(target.span, sym);
  const signal = ctx.machine.signals.get(sym.name);
  if (!signal) return undefined;
  if (signal.type === 'strobe') {
    if (action.equals) {
      ctx.report('wrong-wiring', action.span, `\`${signal.name}\` is a strobe: list its name to assert it, without \`=\``, undefined, [
        { title: `Assert \`${signal.name}\``, edits: [{ span: action.span, newText: signal.name }], preferred: true },
      ]);
    }
    return { signal: signal.name, span: action.span };
  }
  if (signal.numeric) return numberAction(ctx, signal, action);
  if (action.number) {
    ctx.report('wrong-wiring', action.number.span, `\`${signal.name}\` has named values (${[...signal.values.keys()].join(', ')}), not numbers; only a number field (\`field NAME WIDTH\`, no values) takes a number`);
    return undefined;
  }
  if (!action.equals || !action.value) {
    if (!action.equals) {
      ctx.report('wrong-wiring', action.span, `\`${signal.name}\` is a field: give it a value, e.g. \`${signal.name}=${[...signal.values.keys()][0] ?? 'VALUE'}\``);
    }
    return undefined;
  }
  const valueName = action.value.text;
  const value = signal.values.get(valueName);
  if (value) {
    ctx.reference(action.value.span, value.symbol);
    return { signal: signal.name, value: { kind: 'code', name: value.name, code: value.code }, span: action.span };
  }
  const mapSym = ctx.lookup('map', valueName);
  if (mapSym) {
    ctx.reference(action.value.span, mapSym);
    const map = ctx.machine.maps.get(valueName);
    if (map && map.output && map.output !== signal.name) {
      ctx.report('wrong-wiring', action.value.span, `the map \`${valueName}\` sets \`${map.output}\`, not \`${signal.name}\``);
      return undefined;
    }
    return { signal: signal.name, value: { kind: 'map', map: valueName }, span: action.span };
  }
  const candidates = [...signal.values.keys(), ...[...ctx.machine.maps.values()].filter((m) => m.output === signal.name).map((m) => m.name)];
  const guess = closest(valueName, candidates);
  ctx.report(
    'undefined-name',
    action.value.span,
    `\`${signal.name}\` has no value or map named \`${valueName}\`` + (guess ? `; did you mean \`${guess}\`?` : `; its values are ${[...signal.values.keys()].join(', ')}`),
    undefined,
    guess ? [{ title: `Change to \`${guess}\``, edits: [{ span: action.value.span, newText: guess }], preferred: true }] : undefined,
  );
  return undefined;
}

/** `next=5` on a number field: the number is the field's code, 0 to 2^width - 1. */
function numberAction(ctx: BuildContext, field: M.Field, action: A.ActionNode): M.Action | undefined {
  const max = 2 ** field.width - 1;
  // `next=jumps`: a map that sets this number field (a jump table on the instruction's bits).
  const mapSym = action.value ? ctx.lookup('map', action.value.text) : undefined;
  if (action.value && mapSym) {
    ctx.reference(action.value.span, mapSym);
    const map = ctx.machine.maps.get(action.value.text);
    if (map?.output && map.output !== field.name) {
      ctx.report('wrong-wiring', action.value.span, `the map \`${action.value.text}\` sets \`${map.output}\`, not \`${field.name}\``);
      return undefined;
    }
    return { signal: field.name, value: { kind: 'map', map: action.value.text }, span: action.span };
  }
  if (!action.equals || !action.number) {
    if (action.equals && !action.value) return undefined; // the parser reported what is missing
    if (action.value) ctx.report('wrong-wiring', action.value.span, `\`${field.name}\` is a number field: give it a number from 0 to ${max}, e.g. \`${field.name}=1\``);
    else if (!action.equals) ctx.report('wrong-wiring', action.span, `\`${field.name}\` is a number field: give it a number, e.g. \`${field.name}=1\``);
    return undefined;
  }
  const code = parseNumber(action.number.text);
  if (code === undefined || code > max) {
    ctx.report('bad-number', action.number.span, code === undefined ? `\`${action.number.text}\` is not a number; write it in decimal, or with 0x (hex) or 0b (binary)` : `\`${field.name}\` has ${field.width} bit(s): a number from 0 to ${max}; ${code} does not fit`);
    return undefined;
  }
  return { signal: field.name, value: { kind: 'code', name: String(code), code }, span: action.span };
}
