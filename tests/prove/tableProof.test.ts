// The proof of a whole table as `check` and the editor run it (core/prove/proveTable.ts), with
// Z3's WebAssembly build from npm (z3-solver) deciding. Held to the RISC-V Unprivileged ISA
// specification (20191213), section 2.4: SLT is the signed compare and SLTU the unsigned one, so
// the demo with the two decode-map rows swapped must be refuted on exactly those two rows, and
// the demo as shipped must prove every one of the 40 instructions of chapter 2.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { newProofCache, proofCounts, proveTable } from '../../server/src/core/prove';
import { z3WasmSolver } from '../../server/src/cli/z3Wasm';

const read = (path: string) => readFileSync(new URL(`../../${path}`, import.meta.url), 'utf8');
const demo = read('examples/halyard-32.pwt');
const swapped = read('examples/faults/proof/proof-refuted.pwt');
const solver = z3WasmSolver();

describe('proving a table', () => {
  it('the demo proves 40/40 and gives no diagnostics', { timeout: 120_000 }, async () => {
    const proof = await proveTable(analyse(demo).machine, solver);
    expect(proof?.unavailable).toBeUndefined();
    expect(proofCounts(proof!.results)).toEqual({ proved: 40, refuted: 0, unknown: 0 });
    expect(proof!.diagnostics).toEqual([]);
  });

  it('swapped slt/sltu rows are refuted on those two map rows, with the counterexample and the steps', { timeout: 120_000 }, async () => {
    const analysis = analyse(swapped);
    expect(analysis.diagnostics).toEqual([]); // every structural check passes: only the proof sees it
    const proof = (await proveTable(analysis.machine, solver))!;
    expect(proof.results.filter((r) => r.verdict.kind === 'refuted').map((r) => r.mnemonic)).toEqual(['slt', 'sltu']);
    expect(proof.diagnostics.map((d) => d.code)).toEqual(['proof-refuted', 'proof-refuted']);
    const rowLine = swapped.split('\n').findIndex((l) => l.includes('010 0 sltu'));
    for (const [d, row, name] of [[proof.diagnostics[0], '010 0 sltu', 'slt'], [proof.diagnostics[1], '011 0 slt', 'sltu']] as const) {
      expect(analysis.lines.position(d.span.start).line).toBe(rowLine);
      expect(swapped.slice(d.span.start, d.span.end).trim()).toBe(row);
      expect(d.severity).toBe('error');
      expect(d.message).toMatch(new RegExp(`^${name} does not do what RV32I specifies`));
      expect(d.message).toMatch(/expected 0x0000000[01] \(RV32I\), obtained 0x0000000[01] \(table\)/);
      // The steps it ran (fetch 0, 1 and the OP step) and the class are related locations.
      expect(d.related!.filter((r) => r.message.startsWith('ran step')).length).toBe(3);
      expect(d.related!.some((r) => r.message.includes('class `OP`'))).toBe(true);
    }
  });

  it('an edit re-decides only the instructions whose obligations it changed (the cache answers the rest)', { timeout: 120_000 }, async () => {
    const cache = newProofCache();
    const first = (await proveTable(analyse(swapped).machine, solver, { cache }))!;
    expect(first.results.some((r) => r.reused)).toBe(false);
    // The fix touches one decode-map row pair: only slt and sltu have new scripts.
    const fixed = (await proveTable(analyse(demo).machine, solver, { cache }))!;
    expect(fixed.results.filter((r) => !r.reused).map((r) => r.mnemonic)).toEqual(['slt', 'sltu']);
    expect(proofCounts(fixed.results).proved).toBe(40);
    // Back to the swapped rows: every verdict is remembered.
    const again = (await proveTable(analyse(swapped).machine, solver, { cache }))!;
    expect(again.results.every((r) => r.reused)).toBe(true);
    expect(again.diagnostics).toEqual(first.diagnostics);
  });

  it('a cancelled proof stops between instructions and gives no result', async () => {
    let asked = 0;
    const proof = await proveTable(analyse(demo).machine, solver, { cancelled: () => ++asked > 3 });
    expect(proof).toBeUndefined();
    expect(asked).toBe(4);
  });

  it('a table that is not a whole processor gets a note saying why nothing was proved', async () => {
    const proof = (await proveTable(analyse(read('examples/faults/proof/proof-incomplete.pwt')).machine, solver))!;
    expect(proof.unavailable).toMatch(/no program counter/);
    expect(proof.diagnostics.map((d) => [d.code, d.severity])).toEqual([['proof-incomplete', 'info']]);
  });
});
