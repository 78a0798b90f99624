// The VCD trace writer (sim/vcd.ts) against the format of IEEE 1364-2005 clause 18 (header
// sections, $var declarations with printable-ASCII identifier codes 33..126, #time markers,
// scalar changes `1!`, vector changes `b1010 "`) and against the simulator's own state: the
// first steps of a program on the demo table, read back signal by signal. The outside check with
// the vcd-parser package is tests/outside/sim-vcd.test.ts.
import { describe, expect, it } from 'vitest';
import { ProgramRun } from '../../server/src/core/sim/lockstep';
import { VcdTrace } from '../../server/src/core/sim/vcd';
import { DEMO_TEXT, PROGRAM_ORIGIN, exitWords, ins, planOf, programOf } from './support';

interface Parsed {
  vars: Map<string, { id: string; width: number; scope: string }>;
  /** Value of every variable (by scope.name) after each time marker. */
  at(time: number, name: string): string;
  times: number[];
  header: string;
}

/** A small reader for the subset of VCD the writer produces. */
function parseVcd(text: string): Parsed {
  const [header, body] = text.split('$enddefinitions $end');
  const vars = new Map<string, { id: string; width: number; scope: string }>();
  const scopes: string[] = [];
  for (const m of header.matchAll(/\$(scope module (\S+)|upscope|var wire (\d+) (\S+) (\S+)) \$end/g)) {
    if (m[2]) scopes.push(m[2]);
    else if (m[1] === 'upscope') scopes.pop();
    else vars.set(`${scopes.slice(1).join('.')}.${m[5]}`, { id: m[4], width: Number(m[3]), scope: scopes.join('.') });
  }
  const byId = new Map([...vars].map(([name, v]) => [v.id, name]));
  const timeline: { time: number; values: Map<string, string> }[] = [];
  let current = new Map<string, string>();
  let time = -1;
  for (const raw of body.split('\n')) {
    const line = raw.trim();
    if (line === '' || line === '$dumpvars' || line === '$end') continue;
    if (line.startsWith('#')) {
      if (time >= 0) timeline.push({ time, values: new Map(current) });
      time = Number(line.slice(1));
      continue;
    }
    const vector = /^b([01xz]+) (\S+)$/.exec(line);
    const scalar = /^([01xz])(\S+)$/.exec(line);
    const [value, id] = vector ? [vector[1], vector[2]] : scalar ? [scalar[1], scalar[2]] : ['', ''];
    expect(byId.has(id), `change line "${line}" names a declared identifier`).toBe(true);
    current.set(byId.get(id)!, value);
  }
  timeline.push({ time, values: new Map(current) });
  return {
    vars,
    header,
    times: timeline.map((t) => t.time),
    at(t, name) {
      const entry = [...timeline].reverse().find((e) => e.time <= t);
      const value = entry?.values.get(name);
      if (value === undefined) throw new Error(`no value of ${name} at ${t}`);
      return value;
    },
  };
}

const bin = (value: number, width = 32) => (value >>> 0).toString(2).padStart(width, '0');

describe('VCD trace', () => {
  const plan = planOf(DEMO_TEXT);
  const words = [ins('addi', { rd: 10, rs1: 0, imm: 7 }), ...exitWords()];

  function traced(maxSteps: number) {
    const run = new ProgramRun(plan, programOf(words), { reference: false });
    const trace = new VcdTrace(run.sim, { maxSteps, date: 'test', version: 'test' });
    run.sim.observer = trace.observe;
    const ending = run.advance(1000);
    return { run, trace, ending, vcd: parseVcd(trace.text()) };
  }

  it('declares every strobe (line level and asserted), field, bus and state signal with unique identifiers', () => {
    const { vcd, trace } = traced(1000);
    expect(vcd.header).toContain('$timescale 1 us $end');
    const ids = [...vcd.vars.values()].map((v) => v.id);
    expect(new Set(ids).size).toBe(ids.length);
    for (const id of ids) for (const ch of id) expect(ch.charCodeAt(0)).toBeGreaterThanOrEqual(33), expect(ch.charCodeAt(0)).toBeLessThanOrEqual(126);
    const names = [...vcd.vars.keys()];
    expect(names.filter((n) => n.startsWith('strobes.'))).toHaveLength(18);
    expect(names.filter((n) => n.startsWith('asserted.'))).toHaveLength(18);
    expect(names.filter((n) => n.startsWith('fields.'))).toEqual(['fields.alu_fn', 'fields.imm_fmt', 'fields.mem_size']);
    expect(names.filter((n) => n.startsWith('buses.'))).toEqual(['buses.left', 'buses.right', 'buses.result']);
    expect(names.filter((n) => n.startsWith('state.'))).toEqual(['state.step', 'state.address_main', 'state.pc', 'state.ir', 'state.mar', 'state.t', 'state.taken']);
    expect(vcd.vars.get('state.step')?.width).toBe(3);
    expect(vcd.vars.get('fields.alu_fn')?.width).toBe(4);
    expect(vcd.vars.get('state.address_main')?.width).toBe(13);
    expect(trace.steps).toBe(9); // addi, addi, ecall: 3 steps each on the demo table
  });

  it('shows each step before its closing edge: fetch drives pc onto left, the word arrives on result, ir loads at the edge', () => {
    const { vcd } = traced(1000);
    // Step 0 (time 0): pc.oe is active low, so its ROM line is 0 while asserted.
    expect(vcd.at(0, 'strobes.pc_oe')).toBe('0');
    expect(vcd.at(0, 'asserted.pc_oe')).toBe('1');
    expect(vcd.at(0, 'strobes.mar_ck')).toBe('1'); // active high
    expect(vcd.at(0, 'buses.left')).toBe(bin(PROGRAM_ORIGIN));
    expect(vcd.at(0, 'buses.result')).toBe(bin(PROGRAM_ORIGIN)); // ALU passa
    expect(vcd.at(0, 'buses.right')).toBe('x'); // keepers, never driven since reset
    expect(vcd.at(0, 'state.ir')).toBe(bin(0));
    expect(vcd.at(0, 'fields.alu_fn')).toBe(bin(14, 4)); // passa = 14 in the demo's alu.fn
    // Step 1: memory drives the word; ir loads it only at the closing edge.
    expect(vcd.at(1, 'buses.result')).toBe(bin(words[0]));
    expect(vcd.at(1, 'state.ir')).toBe(bin(0));
    expect(vcd.at(1, 'state.mar')).toBe(bin(PROGRAM_ORIGIN));
    // Step 2 (addi): rs1 = x0 on left, the immediate 7 on right, the sum on result.
    expect(vcd.at(2, 'state.ir')).toBe(bin(words[0]));
    expect(vcd.at(2, 'state.step')).toBe('010');
    expect(vcd.at(2, 'buses.left')).toBe(bin(0));
    expect(vcd.at(2, 'buses.right')).toBe(bin(7));
    expect(vcd.at(2, 'buses.result')).toBe(bin(7));
    expect(vcd.at(2, 'asserted.done')).toBe('1');
    // The next instruction's step 0: the pc has counted up at the edge.
    expect(vcd.at(3, 'state.step')).toBe('000');
    expect(vcd.at(3, 'state.pc')).toBe(bin(PROGRAM_ORIGIN + 4));
  });

  it('marks a bus that floats as z', () => {
    const { vcd } = traced(1000);
    // SYSTEM step 2 (the ecall, time 8) drives no bus; result has no keepers.
    expect(vcd.at(8, 'asserted.sys_trap')).toBe('1');
    expect(vcd.at(8, 'buses.result')).toBe('z');
    expect(vcd.at(8, 'buses.left')).not.toBe('z'); // keepers hold it
  });

  it('stops dumping at the step limit and says so in the header', () => {
    const full = traced(1000);
    const short = traced(4);
    expect(full.trace.truncated).toBe(false);
    expect(full.trace.text()).not.toContain('later steps are not in this dump');
    expect(short.trace.steps).toBe(4);
    expect(short.trace.truncated).toBe(true);
    expect(short.vcd.header).toContain('The run went on after 4 steps; later steps are not in this dump.');
    expect(short.vcd.times.at(-1)).toBe(4);
  });
});
