// `phasewright prove FILE [--json] [--instruction NAME]`: proves that the table's encoded control
// store implements each RV32I instruction for all operand values (server/src/core/prove), with
// z3 deciding each obligation: the z3 program or its WebAssembly build from npm (../solvers.ts).
// One line per instruction (verdict, time, and on a machine with loops how far the walk
// unrolled the longest); a refutation is followed by its counterexample in full.
import { basename, resolve } from 'node:path';
import { analyse } from '../../core/analysis';
import { RV32I_INSTRUCTIONS, instructionByMnemonic } from '../../core/isa/rv32i';
import { PROOF_SCOPE, cannotProve, describeCounterexample, obligationsOf, proofPlan, proveMachine, type InstructionResult } from '../../core/prove';
import { parseArgs } from '../args';
import { defineCommand } from '../help';
import { readSource } from '../readSource';
import { ManifestError } from '../output/manifest';
import { writeOutputSet } from '../output/outputSet';
import { OutputError } from '../output/safeWriter';
import { VERSION } from '../version';
import { SOLVER_CHOICES, type SolverChoice, solverFor } from '../solvers';

export const proveCommand = defineCommand({
  name: 'prove',
  summary: 'prove the encoded control store implements RV32I for all operand values',
  operands: 'FILE',
  options: [
    { name: 'json', help: 'print the verdicts as JSON data (per instruction: verdict, milliseconds, counterexample or reason)' },
    { name: 'instruction', value: 'NAME', help: 'prove only this instruction (an RV32I mnemonic such as addi); may be given once' },
    { name: 'smt', value: 'DIR', help: 'also write every obligation as an SMT-LIB 2 (QF_BV) script into DIR, for any solver to decide again' },
    { name: 'solver', value: 'auto|z3|wasm', help: 'wasm: Z3 built to WebAssembly (npm z3-solver, carried with Phasewright); z3: the z3 program (Debian package z3); auto (default): wasm when it loads, else z3' },
  ],
  exitCodes: [
    [0, 'every instruction proved'],
    [1, 'some instruction refuted (its counterexample is printed)'],
    [2, 'usage error, a file that cannot be read, a table with errors, a machine the prover cannot run, or scripts that could not be written'],
    [3, 'nothing refuted, but some instruction could not be decided (the reason is printed)'],
  ],
  async run(args, io) {
    const parsed = parseArgs(args, this.options);
    if (parsed.errors.length || parsed.positionals.length !== 1) {
      io.err(`phasewright prove: ${parsed.errors[0] ?? 'give one table file'}\nusage: phasewright ${this.usage}\n`);
      return 2;
    }
    const file = parsed.positionals[0];
    const name = parsed.options.get('instruction');
    const only = typeof name === 'string' ? [name.toLowerCase()] : undefined;
    if (only && !instructionByMnemonic(only[0])) {
      io.err(`phasewright prove: \`${name}\` is not an RV32I instruction (give a mnemonic such as addi or beq)\n`);
      return 2;
    }
    const solverOption = parsed.options.get('solver') ?? 'auto';
    if (typeof solverOption !== 'string' || !(SOLVER_CHOICES as readonly string[]).includes(solverOption)) {
      io.err(`phasewright prove: --solver takes ${SOLVER_CHOICES.join(', ')}\n`);
      return 2;
    }
    const source = readSource(resolve(io.cwd, file));
    if (!source.ok) {
      io.err(`phasewright prove: ${source.reason.replace(resolve(io.cwd, file), file)}\n`);
      return 2;
    }
    const analysis = analyse(source.text);
    if (analysis.counts.error > 0) {
      io.err(`phasewright prove: ${file} has ${analysis.counts.error} error(s); run \`phasewright check ${file}\` and fix them first\n`);
      return 2;
    }
    const built = proofPlan(analysis.machine);
    const why = built.ok ? cannotProve(built.plan) : built.errors.join('; ');
    if (!built.ok || why) {
      io.err(`phasewright prove: ${file}: ${why}\n`);
      return 2;
    }
    const smtOption = parsed.options.get('smt');
    if (typeof smtOption === 'string') {
      // Every obligation as the solver sees it, written all or nothing and read back (outputSet).
      const files: { name: string; format: string; bytes: Buffer }[] = [];
      for (const spec of RV32I_INSTRUCTIONS) {
        if (only && !only.includes(spec.mnemonic)) continue;
        const { obligations, bounded } = obligationsOf(built.plan, spec);
        obligations.forEach((o, i) => files.push({ name: `${spec.mnemonic}-${i + 1}.smt2`, format: 'smt-lib', bytes: Buffer.from(o.script, 'utf8') }));
        // A path stopped at the walk's bound: unsat says no values take it.
        bounded.forEach((b, i) => files.push({ name: `${spec.mnemonic}-bounded-${i + 1}.smt2`, format: 'smt-lib', bytes: Buffer.from(b.script, 'utf8') }));
      }
      try {
        const report = writeOutputSet({ folder: resolve(io.cwd, smtOption), command: 'prove', sourceFile: basename(file), version: VERSION, files });
        io.err(`wrote ${report.files.length} SMT-LIB 2 script(s) into ${smtOption}\n`);
      } catch (err) {
        if (err instanceof OutputError || err instanceof ManifestError) {
          io.err(`phasewright prove: ${err.message}\n`);
          return 2;
        }
        throw err;
      }
    }
    const solver = solverFor(solverOption as SolverChoice);
    const json = parsed.options.has('json');
    // In text, each instruction's line is printed as soon as it is decided (a large machine takes seconds).
    const printLine = (r: InstructionResult) => {
      const v = r.verdict;
      const paths = v.kind === 'proved' && v.paths ? ` over ${v.paths} paths` : '';
      const loop = v.kind === 'proved' && v.unrolled ? `; loop unrolled up to ${v.unrolled.times} times (step ${v.unrolled.step})` : '';
      const detail = v.kind === 'proved' ? (v.obligations ? `${v.obligations} obligation${v.obligations > 1 ? 's' : ''}${paths}${loop}` : 'traps to the environment on every path') : v.kind === 'unknown' ? v.reason : v.description;
      io.out(`${r.mnemonic.padEnd(6)} ${v.kind.padEnd(8)} ${String(r.milliseconds).padStart(6)} ms  ${detail}\n`);
      if (v.kind === 'refuted') io.out(describeCounterexample(v.counterexample).join('\n') + '\n');
    };
    const results = await proveMachine(built.plan, solver, { only, ...(!json && { onResult: printLine }) });
    if (json) {
      io.out(JSON.stringify({ file, solver: solver.name, scope: PROOF_SCOPE, results }, null, 2) + '\n');
    } else {
      const count = (k: string) => results.filter((r) => r.verdict.kind === k).length;
      io.out(`${file}: ${count('proved')} proved, ${count('refuted')} refuted, ${count('unknown')} unknown of ${results.length}\n`);
      io.out(`scope: ${PROOF_SCOPE}\n`);
      io.out(`solver: ${solver.name}\n`);
    }
    if (results.some((r) => r.verdict.kind === 'refuted')) return 1;
    return results.some((r) => r.verdict.kind === 'unknown') ? 3 : 0;
  },
});
